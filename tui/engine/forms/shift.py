"""The shift that makes x positive before a log or power (Royston & Sauerbrei 2008)."""

from __future__ import annotations

from tui.engine.counts import ReducedCounts


def learn_shift(counts: ReducedCounts) -> float:
    """0 when min(x) > 0, else -min(x) plus the smallest gap between distinct values.

    Both come from the column's rows (a binned column's first bin mean lies above its
    minimum, and bin means lie further apart than its values), so every training row maps
    above 0.
    """
    low = counts.minimum
    if low is None or low > 0:
        return 0.0
    gap = counts.smallest_gap
    return float(-low + (1.0 if gap is None else gap))

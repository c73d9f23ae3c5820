"""Where to look for a data-driven cut point or knot."""

from __future__ import annotations

import numpy as np

from tui.engine.counts import ReducedCounts

SEARCH_PERCENTILES = np.linspace(0.10, 0.90, 17)
"""Cut points are searched at the 10th to 90th percentiles in steps of 5 points, so that
each side keeps at least a tenth of the rows."""


def cut_candidates(counts: ReducedCounts) -> list[float]:
    """Distinct candidate cut points strictly inside the range of x."""
    if counts.distinct_values < 2:
        return []
    lo, hi = float(counts.x[0]), float(counts.x[-1])  # x is sorted (rows or distinct values)
    values = np.unique(counts.quantile(SEARCH_PERCENTILES))
    return [float(v) for v in values if lo < v <= hi]

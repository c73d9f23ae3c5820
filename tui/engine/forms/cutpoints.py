"""Where to look for a data-driven cut point or knot."""

from __future__ import annotations

import numpy as np

from tui.engine.counts import ReducedCounts

SEARCH_PERCENTILES = np.linspace(0.10, 0.90, 17)
"""Cut points are searched at the 10th to 90th percentiles in steps of 5 points, so that
each side keeps at least a tenth of the rows."""


def cut_candidates(counts: ReducedCounts, upper_included: bool = True) -> list[float]:
    """Distinct search percentiles c of x with min(x) < c ≤ max(x).

    Each such c splits the rows into x < c and x ≥ c, both non-empty, which is what an
    indicator (1 when x < c) needs: c = max(x) still sets the rows at the maximum apart.
    With ``upper_included=False`` c < max(x) as well, strictly inside the range, which is
    what a hinge needs: max(x - c, 0) is zero on every row when c = max(x).
    """
    if counts.distinct_values < 2:
        return []
    lo, hi = float(counts.x[0]), float(counts.x[-1])  # x is sorted (rows or distinct values)
    values = np.unique(counts.quantile(SEARCH_PERCENTILES))
    return [float(v) for v in values if lo < v and (v < hi or (upper_included and v == hi))]

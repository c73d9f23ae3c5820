"""A binned column's bin counts, smallest gap and distinct count from one query over rows
whose bin number the engine has already found (Spark: ``Bucketizer``, a binary search).

The rows are windowed by bin (never one window over the whole column): the step from each
value to the one before it in its bin gives the smallest gap and the distinct count inside
the bins; the gaps across bin edges come from each bin's smallest and largest value here.
Bins cover disjoint ranges (a tail value keeps its own bin), so these are the exact figures.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np

from tui.intake.sources.dialect import Dialect


def bucket_pass_query(
    relation: str, column: str, key: str, low_tail: float, high_tail: float, d: Dialect
) -> str:
    """(bin, tail value, rows, events, summed x, smallest x, largest x, distinct values,
    smallest positive step) per bin of ``column``, its bin number in ``key``."""
    lo, hi = d.number(low_tail), d.number(high_tail)
    tail = f"{column} < {lo} OR {column} >= {hi}"
    return (
        f"SELECT k__, v__, COUNT(*), SUM(y__), SUM(x__), MIN(x__), MAX(x__), "
        "SUM(CASE WHEN d__ IS NULL OR d__ > 0 THEN 1 ELSE 0 END), "
        "MIN(CASE WHEN d__ > 0 THEN d__ END) FROM ("
        f"SELECT y__, {column} AS x__, "
        f"CASE WHEN {tail} THEN -1 ELSE {key} END AS k__, "
        f"CASE WHEN {tail} THEN {column} END AS v__, "
        f"{column} - LAG({column}) OVER (PARTITION BY {key} ORDER BY {column}) AS d__ "
        f"FROM {relation} WHERE {column} IS NOT NULL) w GROUP BY k__, v__"
    )


def read_bucket_pass(
    rows: Sequence[Sequence[Any]],
) -> tuple[np.ndarray, np.ndarray, np.ndarray, float | None, int]:
    """x (tail value or bin mean), rows and events per bin, ascending; the smallest gap and
    the distinct count."""
    groups = sorted(
        (float(v) if v is not None else float(sx) / float(n), float(n), float(e), mn, mx, k, g)
        for _, v, n, e, sx, mn, mx, k, g in rows
    )
    x, t, ev = (np.array([row[i] for row in groups], dtype=float) for i in range(3))
    inside = [float(row[6]) for row in groups if row[6] is not None]
    # Bins are disjoint ranges: sorted by x they are sorted by range too.
    lows = np.array([float(row[3]) for row in groups])
    highs = np.array([float(row[4]) for row in groups])
    across = lows[1:] - highs[:-1]
    steps = inside + [float(s) for s in across[across > 0]]
    gap = min(steps) if steps else None
    return x, t, ev, gap, int(sum(int(row[5]) for row in groups))

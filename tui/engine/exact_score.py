"""A binned column's triage score refitted on every distinct value.

From 10,000 rows a column with many distinct values is scanned on at most
``DEFAULT_MAX_LEVELS`` bins (``counts.py``); its score then differs slightly from the exact
one. When such a column is opened, the score's two fits (linear and the scoring spline)
are cheap on every distinct value, about half a second at 20,000 rows on a loaded machine,
while the full candidate table is not (FP1 and FP2 searches: ten seconds and more), so the
column screen shows the table on the scan's bins and this exact score beside it.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from tui.engine.fitting import one_blas_thread
from tui.engine.scan import ColumnScan, ScanSettings, reduce_for_scan, scan_reduced

EXACT_SCORE_VALUES = 200_000
"""Most distinct values refitted exactly (a few seconds at most for the two fits)."""


def exact_score(
    x: np.ndarray, y: np.ndarray, settings: ScanSettings, column: str = ""
) -> ColumnScan | None:
    """The column's score (linear and spline only) on its exact counts per distinct value,
    unadjusted and unweighted; None when it has more than ``EXACT_SCORE_VALUES``."""
    every_value = replace(settings, max_levels=EXACT_SCORE_VALUES)
    reduced = reduce_for_scan(x, y, every_value, None, column)
    if not reduced.counts.exact:
        return None
    with one_blas_thread():
        return scan_reduced(column, reduced, every_value, forms=False)[0]

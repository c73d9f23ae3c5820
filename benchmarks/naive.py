"""The hand-written loop bendwise is measured against: two statsmodels fits per column.

For each column, on every row with a value: a GLM Binomial fit of a linear term and one
of a restricted cubic spline with 4 knots at the 5th, 35th, 65th and 95th percentiles;
the score is the deviance difference (likelihood-ratio chi-square). Knots that tie are
merged, and a column left with fewer than 3 distinct knots is not scored, as in bendwise.
"""

from __future__ import annotations

import time

import numpy as np
import pandas as pd
import statsmodels.api as sm

from tui.engine.forms.spline import KNOT_PERCENTILES, spline_basis


def naive_score(x: np.ndarray, y: np.ndarray, knots: int = 4) -> float | None:
    """LR chi-square of the spline against linear on the rows where x is finite."""
    present = np.isfinite(x)
    x, y = x[present], np.asarray(y, dtype=float)[present]
    at = np.unique(np.quantile(x, KNOT_PERCENTILES[knots]))
    if at.size < 3:
        return None
    ones = np.ones(x.size)
    family = sm.families.Binomial()
    linear = sm.GLM(y, np.column_stack([ones, x]), family=family).fit()
    spline = sm.GLM(y, np.column_stack([ones, spline_basis(x, at)]), family=family).fit()
    return float(linear.deviance - spline.deviance)


def naive_scan_of_file(path: str, outcome: str) -> tuple[float, dict[str, float | None]]:
    """Read a Parquet file, then time the loop over every column but the outcome.

    Meant for a process of its own: statsmodels on a million rows leaves the process many
    gigabytes large, which would slow everything timed after it in the same process.
    """
    frame = pd.read_parquet(path)
    y = frame[outcome].to_numpy(dtype=float)
    scores: dict[str, float | None] = {}
    start = time.perf_counter()
    for name in frame.columns:
        if name != outcome:
            scores[name] = naive_score(frame[name].to_numpy(dtype=float), y)
    return time.perf_counter() - start, scores

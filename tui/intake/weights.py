"""Row weights: frequency weights (each row stands for w identical rows) or survey weights.

Frequency weights are used as they are: the fit equals the fit on the rows repeated w times,
and the number of observations is the sum of the weights (statsmodels' ``freq_weights``).
Survey (sampling) weights change how much each row counts but not how many rows were
observed: they are rescaled to average 1, so the number of observations stays the number of
rows (statsmodels' ``var_weights`` with the same rescaling). Likelihood-ratio tests under
survey weights ignore the sampling design and are only approximate, so the scan scores
survey-weighted columns by a robust Wald test instead (``engine/robust_wald.py``).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from tui.problems import InputProblem

if TYPE_CHECKING:
    import pandas as pd

FREQUENCY, SURVEY = "frequency", "survey"
WEIGHT_KINDS = (FREQUENCY, SURVEY)


@dataclass(frozen=True, eq=False)
class RowWeights:
    """Checked weights for the rows kept."""

    column: str
    """Weight column."""
    kind: str
    """``frequency`` or ``survey``."""
    values: np.ndarray
    """Positive weights for the kept rows (survey weights rescaled to mean 1)."""
    keep: np.ndarray
    """Mask over the input rows: weight above zero."""
    dropped_zero: int
    """Rows dropped because their weight is zero."""


def check_weights(series: pd.Series, column: str, kind: str = FREQUENCY) -> RowWeights:
    """Validate a weight column: numeric, finite, not negative; zero drops the row."""
    import pandas as pd

    if kind not in WEIGHT_KINDS:
        raise InputProblem(f"weight kind must be one of {', '.join(WEIGHT_KINDS)}, not {kind!r}")
    if series.dtype == bool:
        series = series.astype(float)
    raw = pd.to_numeric(series, errors="coerce")
    if raw.isna().any() and series.notna().sum() > raw.notna().sum():
        raise InputProblem(f"weight column {column!r} is not numeric")
    values = raw.to_numpy(dtype=float, na_value=np.nan)
    bad = ~np.isfinite(values)
    if bad.any():
        raise InputProblem(
            f"weight column {column!r} has {int(bad.sum())} missing or non-finite value(s)"
        )
    if (values < 0).any():
        raise InputProblem(
            f"weight column {column!r} has {int((values < 0).sum())} negative value(s)"
        )
    keep = values > 0
    if not keep.any():
        raise InputProblem(f"weight column {column!r} is zero on every row")
    kept = values[keep]
    if kind == SURVEY:
        kept = kept / kept.mean()
    return RowWeights(column, kind, kept, keep, int((~keep).sum()))

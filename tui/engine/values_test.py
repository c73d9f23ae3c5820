"""Score of a column with few distinct values, where tied quantiles leave no spline knots.

The likelihood-ratio test of one indicator per distinct value (each value its own
log-odds) against linear, on values - 2 df: common practice for a discrete predictor (the
linear logit nested in the model with a design variable per value). Without covariates
the per-value fit has a closed form (each value's log-odds is its observed one), so values
with no events or no non-events need no infinite coefficient.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tui.engine.chi_square import chi2_upper
from tui.engine.compare import FormFit
from tui.engine.counts import ReducedCounts
from tui.engine.fitting import fit_logistic

SPLINE_TEST, VALUES_TEST = "spline", "values"
"""Which test gave a column's score: the spline against linear, or one indicator per value."""
MAX_VALUES = 20
"""Columns with more distinct values than this keep no score when the spline fails: a
test on that many df says little about shape."""


@dataclass(frozen=True)
class ValuesScore:
    """One indicator per distinct value against linear."""

    chi2: float
    """Likelihood-ratio chi-square."""
    df: int
    """Distinct values - 2."""
    p_value: float
    """Upper chi-square tail."""
    values: np.ndarray
    """The distinct values, ascending."""
    log_odds: np.ndarray
    """Observed log-odds at each value, 1/2 added to both counts (Haldane 1956)."""


def _per_value(counts: ReducedCounts) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Rows and events at each distinct value (rows of an adjusted check pooled)."""
    values, which = np.unique(counts.x, return_inverse=True)
    trials = np.bincount(which, weights=counts.trials, minlength=values.size)
    events = np.bincount(which, weights=counts.events, minlength=values.size)
    return values, trials, events


def _saturated_llf(trials: np.ndarray, events: np.ndarray) -> float:
    """Log-likelihood with each value at its observed proportion (0 log 0 = 0)."""
    non = trials - events
    return float(np.sum(_xlogy(events, events / trials) + _xlogy(non, non / trials)))


def _xlogy(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """a log b, 0 where a is 0 (scipy's xlogy, without importing scipy)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(a == 0, 0.0, a * np.log(b))


def values_score(counts: ReducedCounts, linear: FormFit) -> ValuesScore | None:
    """The test, or None when it does not apply (binned column, too many or too few
    values, no usable linear fit, or an adjusted per-value fit that does not converge)."""
    if not counts.exact or linear.fit is None or linear.status != "ok":
        return None
    values, trials, events = _per_value(counts)
    if not 3 <= values.size <= MAX_VALUES:
        return None
    df = int(values.size) - 2
    if counts.covariates is None:
        full_llf = _saturated_llf(trials, events)
    else:
        which = np.searchsorted(values, counts.x)
        indicators = (which[:, None] == np.arange(1, values.size)[None, :]).astype(float)
        design = np.column_stack([np.ones(counts.x.size), counts.covariates, indicators])
        full = fit_logistic(design, counts.events, counts.trials)
        if not full.ok:
            return None
        full_llf = full.llf
    chi2 = max(0.0, 2.0 * (full_llf - linear.fit.llf))
    p = chi2_upper(df, chi2)
    log_odds = np.log((events + 0.5) / (trials - events + 0.5))
    return ValuesScore(chi2, df, p, values, log_odds)

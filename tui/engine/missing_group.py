"""The rows whose x is missing, as a group of its own, and the choice of how to code them.

``missing_group`` gives their count, event rate and empirical logit (with the 1/2
correction of ``groups.py``), so the screen and the report can show whether missingness
itself carries risk. ``compare_fills`` fits the accepted form on *all* rows with an outcome,
a missing x replaced by a fill value, without and with a 0/1 missing indicator. The form's
numbers stay as learned (knots, cut points, shift); only its coefficients are refitted.

The observed rows enter as their reduced counts and the missing rows as one more design
row (the fill's outputs, with the indicator 1), which loses nothing: the likelihood depends
only on rows and events per distinct design row. AIC counts the intercept, one coefficient
per output and the indicator's; the fill value is not counted. The complete-case comparison
table is a different set of rows, so its AIC is not comparable with these.

A single fill and a missing indicator can bias estimates when values are not missing
completely at random (Donders et al. 2006, J Clin Epidemiol); Sterne et al. (2009, BMJ)
recommend multiple imputation for inference. Scoring systems use them as common practice.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from tui.engine.counts import ReducedCounts, reduce_column
from tui.engine.fitting import fit_logistic
from tui.engine.forms.base import MissingFill, Recoding
from tui.engine.groups import empirical_logit

LEAVE, FILL, FILL_INDICATOR = "leave", "fill", "fill+indicator"
"""Keys of the three choices, in the order the screen lists them."""


@dataclass(frozen=True)
class MissingGroup:
    """The rows of one column whose x is missing (NaN or ±inf) and that have an outcome."""

    n: float
    """Rows with a missing x."""
    events: float
    """Events among them."""
    observed: float
    """Rows with a finite x (the complete cases)."""
    observed_events: float
    """Events among the complete cases."""
    logit: float
    """Empirical logit with the 1/2 correction."""
    variance: float
    """Its approximate variance."""

    @property
    def proportion(self) -> float:
        """Event rate of the missing rows."""
        return self.events / self.n if self.n else float("nan")

    @property
    def se(self) -> float:
        """Approximate standard error of the empirical logit."""
        return float(np.sqrt(self.variance))

    @property
    def rows(self) -> float:
        """Every row with an outcome: missing and observed together."""
        return self.n + self.observed


def missing_group(x: np.ndarray, y: np.ndarray) -> MissingGroup | None:
    """The missing rows of ``x`` against the 0/1 outcome ``y``; None when none is missing."""
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    gone = ~np.isfinite(x)
    if not gone.any():
        return None
    n, events = float(gone.sum()), float(y[gone].sum())
    logit, variance = empirical_logit(events, n)
    seen = ~gone
    return MissingGroup(n, events, float(seen.sum()), float(y[seen].sum()), logit, variance)


def training_median(x: np.ndarray) -> float:
    """The median of the finite training values: the fill bendwise proposes."""
    x = np.asarray(x, dtype=float)
    finite = x[np.isfinite(x)]
    if finite.size == 0:
        raise ValueError("the column has no finite values, so it has no median")
    return float(np.median(finite))


@dataclass(frozen=True)
class FillFit:
    """The accepted form fitted on every row with an outcome, missing x filled."""

    key: str
    """``fill`` or ``fill+indicator``."""
    recoding: Recoding
    """The recoding as it would be logged (form, clip and missing rule)."""
    rows: float
    """Rows in the fit: every row with an outcome."""
    df: int
    """Coefficients beyond the intercept (one per output)."""
    deviance: float
    """-2 × log-likelihood."""
    aic: float
    """deviance + 2 × (df + 1)."""
    status: str
    """``ok``, ``separation``, ``not-converged`` or ``failed``."""
    indicator_coef: float | None = None
    """Log-odds of the missing rows beyond what the fill's value predicts (indicator only)."""


@dataclass(frozen=True)
class FillComparison:
    """Fill alone against fill with an indicator, on the same rows."""

    fill: float
    """The fill value compared."""
    group: MissingGroup
    """The missing rows."""
    fill_only: FillFit
    with_indicator: FillFit

    @property
    def delta_aic(self) -> float:
        """AIC with the indicator minus AIC without (negative: the indicator is better)."""
        return self.with_indicator.aic - self.fill_only.aic

    @property
    def best(self) -> str:
        """Key of the usable choice with the lower AIC (fill alone on a tie)."""
        usable = [f for f in (self.fill_only, self.with_indicator) if f.status == "ok"]
        if not usable:
            return LEAVE
        return min(usable, key=lambda f: f.aic).key


def compare_fills(
    recoding: Recoding, x: np.ndarray, y: np.ndarray, fill: float
) -> FillComparison | None:
    """Fit ``recoding`` with ``fill`` on every row of ``x`` (y is 0/1 and never missing),
    without and with a missing indicator; None when no x is missing."""
    group = missing_group(x, y)
    if group is None:
        return None
    counts = reduce_column(np.asarray(x, dtype=float), np.asarray(y))
    return compare_counts(recoding, counts, group, fill)


def compare_counts(
    recoding: Recoding, counts: ReducedCounts, group: MissingGroup, fill: float
) -> FillComparison:
    """``compare_fills`` from the complete cases' counts and the missing group."""
    if not np.isfinite(fill):
        raise ValueError(f"the fill must be a finite number, not {fill!r}")
    form = recoding.without_missing()
    values = np.append(counts.x, fill)
    events = np.append(counts.events, group.events)
    trials = np.append(counts.trials, group.n)
    flag = np.zeros(values.size)
    flag[-1] = 1.0
    fits = []
    for key, indicator in ((FILL, False), (FILL_INDICATOR, True)):
        rule = replace(form, missing=MissingFill(float(fill), indicator))
        basis = form.apply(values)
        if indicator:
            basis = np.column_stack([basis, flag])
        fits.append(_fit(key, rule, basis, events, trials))
    return FillComparison(float(fill), group, fits[0], fits[1])


def _fit(
    key: str, recoding: Recoding, basis: np.ndarray, events: np.ndarray, trials: np.ndarray
) -> FillFit:
    df = int(basis.shape[1])
    rows = float(trials.sum())
    design = np.column_stack([np.ones(basis.shape[0]), basis])
    if not np.all(np.isfinite(design)):  # a log or power form cannot take this fill
        return FillFit(key, recoding, rows, df, float("nan"), float("nan"), "failed")
    with np.errstate(all="ignore"):
        fit = fit_logistic(design, events, trials)
    if fit.separated:
        status = "separation"
    elif fit.rank_deficient:
        status = "failed"
    elif not fit.converged:
        status = "not-converged"
    else:
        status = "ok"
    coef = float(fit.coef[-1]) if key == FILL_INDICATOR else None
    return FillFit(key, recoding, rows, df, fit.deviance, fit.aic(df), status, coef)

"""The comparison table of candidate forms for one column."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from tui.engine.counts import ReducedCounts
from tui.engine.fitting import LogisticFit, fit_logistic, lr_test
from tui.engine.forms.base import Candidate, Kind, Learned, Recoding, RecodingError, fit_on_counts
from tui.engine.forms.registry import default_candidates
from tui.engine.forms.search import learn_searches
from tui.engine.forms.shift import learn_shift
from tui.engine.heap import reuse_freed_memory

EVENTS_PER_PARAMETER = 10
"""Rule of thumb: at least 10 events per estimated parameter (Peduzzi et al. 1996)."""

NOTE_FEW_EVENTS = "few events per parameter"
POWER_SPAN = 5.0
"""A Box-Tidwell interval wider than this (the span of the FP powers, -2 to 3) says
nothing about the power."""


@dataclass(frozen=True)
class FormFit:
    """One row of the comparison table."""

    key: str
    """The candidate's key: the kind key, ``hinge@168.0`` for a number typed by hand,
    ``recorded`` for a fixed recoding. Tables are looked up by it."""
    label: str
    """Candidate label with options, e.g. ``spline, 4 knots`` (for display only)."""
    form: Kind
    """The kind of the candidate (and of its recoding)."""
    recoding: Recoding | None
    """What was learned; None when learning failed."""
    df: int
    """Estimated numbers beyond the intercept (searched ones counted)."""
    status: str
    """``ok``, ``separation``, ``not-converged`` or ``failed``."""
    deviance: float = float("nan")
    """-2 log-likelihood on the rows."""
    aic: float = float("nan")
    """Deviance + 2 (df + 1)."""
    bic: float = float("nan")
    """Deviance + ln(rows) (df + 1)."""
    delta_aic: float = float("nan")
    """AIC minus the linear form's AIC (negative is better)."""
    lr_chi2: float | None = None
    """Likelihood-ratio chi-square against linear, for forms that nest it."""
    lr_df: int | None = None
    """Degrees of freedom of that test."""
    lr_p: float | None = None
    """p-value of that test."""
    notes: tuple[str, ...] = ()
    """Cautions for this row."""
    fit: LogisticFit | None = None
    """The fit, for drawing the curve."""
    covariate_level: float = 0.0
    """Adjusted checks: the covariates' contribution to the log-odds at their means."""
    covariate_df: int = 0
    """Adjusted checks: covariate columns between the intercept and the form's columns."""

    @property
    def kind(self) -> str:
        """Kind key of the recoding."""
        return self.form.key

    @property
    def form_coef(self) -> np.ndarray:
        """Coefficients of the form's own output columns (intercept and covariates left out)."""
        if self.fit is None:
            return np.zeros(0)
        return self.fit.coef[1 + self.covariate_df :]

    def log_odds(self, x: np.ndarray) -> np.ndarray:
        """Fitted log-odds of this form at x, covariates at their means (NaN without a fit)."""
        if self.fit is None or self.recoding is None:
            return np.full(np.shape(x), np.nan)
        basis = self.recoding.apply(np.asarray(x, dtype=float))
        return self.fit.coef[0] + self.covariate_level + basis @ self.form_coef


@dataclass(frozen=True)
class BoxTidwell:
    """Box-Tidwell check: x ln x added to the linear model (Box & Tidwell 1962)."""

    chi2: float
    """Likelihood-ratio chi-square of the x ln x term, 1 df."""
    p_value: float
    """Its p-value."""
    power: float
    """One-step estimate of the power of x: 1 + gamma / beta."""
    shift: float
    """Shift added to x first (0 when x > 0 throughout)."""
    low: float = float("nan")
    """Lower end of the power's 95% interval (delta method on the x ln x coefficient)."""
    high: float = float("nan")
    """Upper end of that interval."""
    monotone: bool = True
    """False when a quadratic in x turns inside the central 90% of the rows and its
    square term is clear (LR p < 0.05): a power of x, always monotone, cannot follow it
    (a flat stretch before a rise reads so too)."""

    @property
    def meaningful(self) -> bool:
        """The power reads as a shape: a finite interval no wider than ``POWER_SPAN`` on a
        monotone curve."""
        finite = bool(np.isfinite(self.low) and np.isfinite(self.high))
        return finite and self.high - self.low <= POWER_SPAN and self.monotone

    def why_not(self) -> str | None:
        """Why the power is not meaningful (None when it is)."""
        if not self.monotone:
            return "curve not monotone"
        if not (np.isfinite(self.low) and np.isfinite(self.high)):
            return "no interval"
        if self.high - self.low > POWER_SPAN:
            return "interval too wide"
        return None


@dataclass(frozen=True)
class ComparisonTable:
    """Every candidate fitted to one column."""

    rows: tuple[FormFit, ...]
    """Candidate rows, linear first."""
    box_tidwell: BoxTidwell | None
    """None when it could not be computed."""

    @property
    def linear(self) -> FormFit:
        """The linear row."""
        return self.rows[0]

    def best(self) -> FormFit | None:
        """Lowest AIC among usable rows."""
        usable = [r for r in self.rows if r.status == "ok"]
        return min(usable, key=lambda r: r.aic) if usable else None

    def row(self, key: str) -> FormFit | None:
        """The row with this key (``spline``, ``hinge@168.0``; see ``FormFit.key``)."""
        return next((r for r in self.rows if r.key == key), None)


def fit_candidate(
    candidate: Candidate,
    counts: ReducedCounts,
    linear: FormFit | None = None,
    learned: Learned | None = None,
    design: np.ndarray | None = None,
) -> FormFit:
    """Learn and fit one candidate; a failure is a status, never an exception.
    ``learned``: what the candidate learns, when already learned (``learn_searches``);
    ``design``: its ``design_matrix`` on the counts' x, when already built."""
    try:
        learned = candidate.learn(counts) if learned is None else learned
        fit = learned.fit
        if fit is None:
            fit = fit_on_counts(learned.recoding, counts, design)
    except (RecodingError, ValueError, np.linalg.LinAlgError) as problem:
        return _failed(candidate, str(problem))
    if fit.rank_deficient:
        return _failed(candidate, "design columns collinear: too few distinct values for this form")
    return form_row(
        candidate, learned, fit, counts, linear, counts.covariate_df, _covariate_level(fit, counts)
    )


def form_row(
    candidate: Candidate,
    learned: Learned,
    fit: LogisticFit,
    counts: ReducedCounts,
    linear: FormFit | None,
    covariate_df: int,
    covariate_level: float,
) -> FormFit:
    """The table row of a learned and fitted candidate: status, notes, AIC, BIC, ΔAIC and
    the LR test against ``linear`` (the row-level adjusted scan builds its rows here too)."""
    status = "separation" if fit.separated else ("ok" if fit.converged else "not-converged")
    notes = learned.notes
    df = learned.df
    events = counts.total_events
    minority = min(events, counts.rows - events)
    if minority < EVENTS_PER_PARAMETER * df:
        notes.append(NOTE_FEW_EVENTS)
    # Covariates are estimated in every form alike: they count in AIC/BIC, not in the LR df.
    aic = fit.aic(df + covariate_df)
    bic = fit.bic(df + covariate_df)
    lr_chi2 = lr_df = lr_p = None
    delta = float("nan")
    if linear is not None and linear.fit is not None:
        delta = aic - linear.aic
        if df > linear.df and learned.nests_linear:
            lr_df = df - linear.df
            lr_chi2, lr_p = lr_test(linear.fit, fit, lr_df)
    elif candidate.kind == "linear":
        delta = 0.0
    return FormFit(
        key=candidate.key,
        label=candidate.label,
        form=candidate.form,
        recoding=learned.recoding,
        df=df,
        status=status,
        deviance=fit.deviance,
        aic=aic,
        bic=bic,
        delta_aic=delta,
        lr_chi2=lr_chi2,
        lr_df=lr_df,
        lr_p=lr_p,
        notes=tuple(notes),
        fit=fit,
        covariate_level=covariate_level,
        covariate_df=covariate_df,
    )


def _failed(candidate: Candidate, problem: str) -> FormFit:
    return FormFit(
        candidate.key, candidate.label, candidate.form, None, 0, "failed", notes=(problem,)
    )


def _covariate_level(fit: LogisticFit, counts: ReducedCounts) -> float:
    c = counts.covariate_df
    if c == 0:
        return 0.0
    return float(counts.covariate_means @ fit.coef[1 : 1 + c])


def box_tidwell(
    counts: ReducedCounts, linear: LogisticFit | None, quadratic: LogisticFit | None = None
) -> BoxTidwell | None:
    """Box-Tidwell on (shifted) x; None without a usable linear fit.

    The linear fit stands for the fit on shifted x (the solver centres every column, so a
    shift changes only the intercept), and ``quadratic``, the fit of x and x squared when
    the table has it, for the one on shifted x: the same models, not fitted twice.
    """
    if linear is None or not linear.ok or counts.distinct_values < 3:
        return None
    shift = learn_shift(counts)
    z = counts.x + shift
    base = np.ones((z.size, 1))
    if counts.covariates is not None:  # adjusted check: covariates in both models
        base = np.column_stack([base, counts.covariates])
    at = base.shape[1]  # column of z in both designs
    design = np.column_stack([base, z, z * np.log(z)])
    try:
        full = fit_logistic(design, counts.events, counts.trials)
    except ValueError:
        return None
    chi2, p = lr_test(linear, full, 1)
    beta = linear.coef[at]
    power = 1.0 + full.coef[at + 1] / beta if beta != 0 else float("nan")
    half = 1.96 * _coef_se(design, counts, full, at + 1) / abs(beta) if beta != 0 else np.nan
    return BoxTidwell(
        chi2,
        p,
        float(power),
        shift,
        power - half,
        power + half,
        _monotone(counts, base, linear, quadratic),
    )


def _coef_se(design: np.ndarray, counts: ReducedCounts, fit: LogisticFit, j: int) -> float:
    """Standard error of coefficient j from the inverse information at the fit."""
    mu = 1.0 / (1.0 + np.exp(-(design @ fit.coef)))
    info = (design * (counts.trials * mu * (1 - mu))[:, None]).T @ design
    try:
        return float(np.sqrt(np.linalg.inv(info)[j, j]))
    except np.linalg.LinAlgError:
        return float("nan")


def _monotone(
    counts: ReducedCounts, base: np.ndarray, line: LogisticFit, bend: LogisticFit | None
) -> bool:
    """False when a quadratic in x clearly turns inside the central 90% of the rows
    (``line`` and ``bend``: the fits of x and of x and x squared, bend fitted here when
    None)."""
    if bend is None:
        x = counts.x
        try:
            bend = fit_logistic(np.column_stack([base, x, x * x]), counts.events, counts.trials)
        except ValueError:
            return True
    _, p = lr_test(line, bend, 1)
    b1, b2 = bend.coef[-2], bend.coef[-1]
    if not (p < 0.05) or b2 == 0:
        return True
    turn = -b1 / (2 * b2)
    low, high = (float(v) for v in counts.quantile([0.05, 0.95]))
    return not (low < turn < high)


def compare_forms(
    counts: ReducedCounts,
    candidates: Sequence[Candidate] | None = None,
    groups: int = 4,
    knots: int = 4,
) -> ComparisonTable:
    """Fit every candidate (linear first) and the Box-Tidwell check."""
    candidates = list(candidates) if candidates is not None else default_candidates(groups, knots)
    if candidates[0].kind != "linear":
        raise ValueError("the first candidate must be linear (the reference)")
    # The searches stack tens of designs: temporaries of about 1 MB per Newton step, each a
    # fresh mapping (kernel page faults) unless freed blocks are kept for reuse.
    reuse_freed_memory()
    searched = learn_searches(candidates, counts)
    linear = fit_candidate(candidates[0], counts, learned=searched.get(0))
    rows = [linear] + [
        fit_candidate(c, counts, linear, searched.get(n))
        for n, c in enumerate(candidates[1:], start=1)
    ]
    quadratic = next((r.fit for r in rows if r.key == "quadratic"), None)
    return ComparisonTable(tuple(rows), box_tidwell(counts, linear.fit, quadratic))

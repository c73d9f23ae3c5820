"""Design-based score for survey weights: a Wald test with a sandwich covariance.

Under survey (sampling) weights the weighted log-likelihood is a pseudo-likelihood, so its
likelihood-ratio statistic does not follow the chi-square it is read against. The Wald
chi-square of the spline's non-linear terms with the robust covariance
B^-1 M B^-1 does (Binder 1983; the sandwich estimator of White 1980, HC0: no small-sample
factor), where B = sum_i w_i p_i (1 - p_i) x_i x_i' and M = sum_i w_i^2 (y_i - p_i)^2 x_i x_i'.
Rows that share a design row share p and x, so M needs per cell only the squared weights of
the event rows and of the non-event rows (``ReducedCounts.events_sq``, ``nonevents_sq``):
sum_events w^2 (1 - p)^2 + sum_nonevents w^2 p^2. The statistic is the same for any
rescaling of the weights, and for a binned column it is the exact sandwich of the design
that puts each row at its bin's mean x.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tui.engine.chi_square import chi2_upper
from tui.engine.counts import ReducedCounts
from tui.engine.fitting import LogisticFit, expit
from tui.engine.forms.base import Recoding, design_matrix

LR, WALD_ROBUST, LR_APPROXIMATE = "LR", "Wald (robust)", "LR (approximate)"
"""The statistic a score is: the likelihood ratio (unweighted and frequency weights), the
robust Wald (survey weights), or a likelihood ratio that ignores the sampling design
(survey weights where no Wald test applies: the one-indicator-per-value test)."""


@dataclass(frozen=True)
class WaldTest:
    """A Wald chi-square of some coefficients being zero."""

    chi2: float
    """The statistic."""
    df: int
    """Coefficients tested."""
    p_value: float
    """Upper chi-square tail on ``df``."""


def sandwich_covariance(
    design: np.ndarray,
    coef: np.ndarray,
    trials: np.ndarray,
    events_sq: np.ndarray,
    nonevents_sq: np.ndarray,
) -> np.ndarray:
    """HC0 sandwich covariance of ``coef`` from counts per design row (rows as cells)."""
    p = expit(design @ coef)
    bread = (design * (trials * p * (1.0 - p))[:, None]).T @ design
    meat_w = events_sq * (1.0 - p) ** 2 + nonevents_sq * p**2
    meat = (design * meat_w[:, None]).T @ design
    inv = np.linalg.inv(bread)
    return inv @ meat @ inv


def wald_test(coef: np.ndarray, cov: np.ndarray, tested: np.ndarray) -> WaldTest:
    """Wald chi-square of ``coef[tested] == 0`` with covariance ``cov``."""
    b = coef[tested]
    v = cov[np.ix_(tested, tested)]
    chi2 = float(max(0.0, b @ np.linalg.solve(v, b)))
    df = int(tested.size)
    return WaldTest(chi2, df, chi2_upper(df, chi2))


def robust_wald(
    recoding: Recoding, fit: LogisticFit, counts: ReducedCounts, tested: int
) -> WaldTest | None:
    """Robust Wald test of the last ``tested`` columns of a form fitted to survey-weighted
    counts (the spline's non-linear terms: k - 2 of them). None without squared weights or
    when the covariance cannot be inverted.

    The columns are centred and scaled first (a Wald test does not change under that: the
    tested coefficients and their covariance scale together), so large x loses no digits.
    """
    if not counts.survey or tested <= 0:
        return None
    design = design_matrix(recoding, counts.x)
    if counts.covariates is not None:  # as fit_on_counts: intercept, covariates, the form
        design = np.column_stack([design[:, :1], counts.covariates, design[:, 1:]])
    eta = design @ fit.coef
    w = counts.trials / counts.trials.sum()
    centre = w @ design[:, 1:]
    scale = np.sqrt(w @ (design[:, 1:] - centre) ** 2)
    scale[scale == 0] = 1.0
    scaled = np.column_stack([np.ones(design.shape[0]), (design[:, 1:] - centre) / scale])
    coef = np.r_[0.0, fit.coef[1:] * scale]
    coef[0] = float(np.mean(eta - scaled[:, 1:] @ coef[1:]))  # the same linear predictor
    squares = (counts.events_sq, counts.nonevents_sq)
    try:
        cov = sandwich_covariance(scaled, coef, counts.trials, *squares)  # type: ignore[arg-type]
        cols = np.arange(design.shape[1] - tested, design.shape[1])
        return wald_test(coef, cov, cols)
    except np.linalg.LinAlgError:
        return None

"""Binomial logistic fits on reduced counts (one row per distinct value or bin).

The log-likelihood of a logistic model depends on the data only through, for each
design row, the number of trials and of events, so fitting on reduced counts gives the
same estimates as fitting on the individual rows. Figures are reported on the row scale
(Bernoulli log-likelihood, nobs = rows), so they equal a row-level statsmodels GLM
Binomial fit of the same design (tests check this to 1e-6).

The solver is a plain Newton-Raphson with step halving: statsmodels costs about 2 ms of
overhead per fit, and a scan makes thousands of small fits.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import stats

# A fitted linear predictor beyond this puts a probability within 1e-13 of 0 or 1:
# only a separated (or quasi-separated) design drives a maximum likelihood fit there.
_SEPARATION_ETA = 30.0
_MAX_ITER = 100


@dataclass(frozen=True)
class LogisticFit:
    """A maximum likelihood logistic fit of one design on reduced counts."""

    coef: np.ndarray
    """Coefficients on the original design columns (intercept first)."""
    llf: float
    """Log-likelihood on the row scale (sum of Bernoulli terms)."""
    nobs: float
    """Number of rows (sum of trials, or of weights)."""
    n_params: int
    """Columns of the design, intercept included."""
    converged: bool
    """Newton iterations met the tolerance."""
    separated: bool
    """Fitted probabilities reached 0 or 1 where the data are pure: separation."""
    rank_deficient: bool
    """The design columns were not linearly independent."""

    @property
    def deviance(self) -> float:
        """-2 log-likelihood (the saturated Bernoulli model has log-likelihood 0)."""
        return -2.0 * self.llf

    def aic(self, df: int | None = None) -> float:
        """AIC; ``df`` counts estimated numbers beyond the intercept (searched ones too)."""
        k = self.n_params if df is None else df + 1
        return -2.0 * self.llf + 2.0 * k

    def bic(self, df: int | None = None) -> float:
        """BIC with log(rows) per estimated number."""
        k = self.n_params if df is None else df + 1
        return -2.0 * self.llf + np.log(self.nobs) * k

    @property
    def ok(self) -> bool:
        """Usable for comparison: converged, not separated, full rank."""
        return self.converged and not self.separated and not self.rank_deficient

    def linear_predictor(self, design: np.ndarray) -> np.ndarray:
        """Log-odds for the rows of ``design`` (intercept column included)."""
        return design @ self.coef


def _log1pexp(eta: np.ndarray) -> np.ndarray:
    return np.logaddexp(0.0, eta)


def _loglik(eta: np.ndarray, events: np.ndarray, trials: np.ndarray) -> float:
    return float(np.sum(events * eta - trials * _log1pexp(eta)))


def fit_logistic(
    design: np.ndarray,
    events: np.ndarray,
    trials: np.ndarray,
    start: np.ndarray | None = None,
    tol: float = 1e-10,
) -> LogisticFit:
    """Fit log-odds = design @ coef by maximum likelihood.

    ``design`` holds the intercept column; ``events`` and ``trials`` are per design row
    (trials may be weights). Columns are centred and scaled inside the solver so that
    magnitudes such as 1e200 or x**3 do not spoil the Newton steps.
    """
    design = np.asarray(design, dtype=float)
    events = np.asarray(events, dtype=float)
    trials = np.asarray(trials, dtype=float)
    m, p = design.shape
    nobs = float(trials.sum())
    if not np.all(np.isfinite(design)):
        raise ValueError("design holds non-finite values")

    # Rescale: z = (design - centre) / scale for non-intercept columns.
    centre = np.zeros(p)
    scale = np.ones(p)
    for j in range(1, p):
        # Divide by the largest magnitude first so that squares of 1e200 cannot overflow.
        big = float(np.max(np.abs(design[:, j]))) if m else 0.0
        if big == 0 or nobs <= 0:
            continue
        col = design[:, j] / big
        c = float(np.average(col, weights=trials))
        s = float(np.sqrt(np.average((col - c) ** 2, weights=trials)))
        centre[j] = c * big
        scale[j] = s * big if s > 0 else big
    z = (design - centre) / scale
    z[:, 0] = 1.0
    if not np.all(np.isfinite(z)):
        raise ValueError("design columns out of floating-point range")

    # Drop linearly dependent columns (they get coefficient 0) and say so.
    q, r = np.linalg.qr(z * np.sqrt(np.maximum(trials, 0))[:, None])
    keep = np.abs(np.diag(r)) > 1e-9 * max(1.0, float(np.abs(np.diag(r)).max(initial=0.0)))
    keep[0] = True
    rank_deficient = not bool(keep.all())
    zk = z[:, keep]

    pbar = (events.sum() + 0.5) / (nobs + 1.0)
    beta = np.zeros(zk.shape[1])
    beta[0] = np.log(pbar / (1 - pbar))
    if start is not None and not rank_deficient and start.shape == (p,):
        # start is given on the original scale; convert to the scaled one.
        b = start * scale
        b[0] = start[0] + float(np.sum(start[1:] * centre[1:]))
        beta = b
    eta = zk @ beta
    ll = _loglik(eta, events, trials)
    converged = False
    for _ in range(_MAX_ITER):
        mu = 0.5 * (1.0 + np.tanh(0.5 * eta))  # stable expit
        w = trials * mu * (1.0 - mu)
        grad = zk.T @ (events - trials * mu)
        hess = (zk * w[:, None]).T @ zk
        try:
            step = np.linalg.solve(hess, grad)
        except np.linalg.LinAlgError:
            step = np.linalg.lstsq(hess, grad, rcond=None)[0]
        t = 1.0
        for _halving in range(40):
            new_beta = beta + t * step
            new_eta = zk @ new_beta
            new_ll = _loglik(new_eta, events, trials)
            if new_ll >= ll - 1e-12 * max(1.0, abs(ll)):
                break
            t *= 0.5
        gain = new_ll - ll
        beta, eta, ll = new_beta, new_eta, new_ll
        if abs(gain) <= tol * (abs(ll) + 0.1) and float(np.max(np.abs(t * step))) < 1e-6:
            converged = True
            break
        if abs(gain) <= tol * (abs(ll) + 0.1) and float(np.max(np.abs(eta))) > _SEPARATION_ETA:
            break  # creeping towards infinity: separation, stop here

    pure = (events <= 0) | (events >= trials)
    separated = bool(np.any((np.abs(eta) > _SEPARATION_ETA) & pure & (trials > 0)))
    if separated:
        converged = False

    coef_scaled = np.zeros(p)
    coef_scaled[keep] = beta
    coef = coef_scaled / scale
    coef[0] = coef_scaled[0] - float(np.sum(coef[1:] * centre[1:]))
    return LogisticFit(
        coef=coef,
        llf=ll,
        nobs=nobs,
        n_params=int(keep.sum()),
        converged=converged,
        separated=separated,
        rank_deficient=rank_deficient,
    )


def lr_test(restricted: LogisticFit, full: LogisticFit, df: int) -> tuple[float, float]:
    """Likelihood-ratio chi-square and p-value of ``full`` against nested ``restricted``."""
    chi2 = max(0.0, 2.0 * (full.llf - restricted.llf))
    if df <= 0:
        return chi2, float("nan")
    return chi2, float(stats.chi2.sf(chi2, df))

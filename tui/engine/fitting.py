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

import contextlib
from collections.abc import Iterator
from dataclasses import dataclass

import numpy as np

from tui.engine import dense
from tui.engine.chi_square import chi2_upper

# A fitted linear predictor beyond this puts a probability within 1e-13 of 0 or 1:
# only a separated (or quasi-separated) design drives a maximum likelihood fit there.
_SEPARATION_ETA = 30.0
_MAX_ITER = 100
_CREEP_STEPS = 5


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


_BLAS_CONTROL: list[object] = []  # the threadpoolctl controller once looked up, or None


def _blas_controller() -> object | None:
    if not _BLAS_CONTROL:
        try:
            from threadpoolctl import ThreadpoolController

            _BLAS_CONTROL.append(ThreadpoolController())
        except ImportError:
            _BLAS_CONTROL.append(None)
    return _BLAS_CONTROL[0]


@contextlib.contextmanager
def one_blas_thread() -> Iterator[None]:
    """Run the enclosed fits with a single BLAS thread.

    The fits are small matrix-vector steps: past a few thousand design rows OpenBLAS
    splits them over threads, and the hand-offs cost more than they save (nearly twice the
    time for a 40,000-row exact table here), worse still when every core already runs a scan
    worker. Uses threadpoolctl when it is installed; without it, nothing changes. The
    limit is process-wide: enter it from one thread at a time.
    """
    controller = _blas_controller()
    if controller is None:
        yield
        return
    with controller.limit(limits=1, user_api="blas"):  # type: ignore[attr-defined]
        yield


def expit(eta: np.ndarray) -> np.ndarray:
    """1 / (1 + e^-eta) in the two forms scipy's expit uses, neither of which overflows:
    e^eta / (1 + e^eta) below zero, 1 / (1 + e^-eta) from zero up."""
    return _expit_low(eta, np.exp(-np.abs(eta)))


def _expit_low(eta: np.ndarray, low: np.ndarray) -> np.ndarray:
    """``expit(eta)`` from e^-|eta| already computed."""
    return np.where(eta < 0, low, 1.0) / (1.0 + low)


def _loglik(eta: np.ndarray, events: np.ndarray, trials: np.ndarray) -> tuple[float, np.ndarray]:
    """Bernoulli log-likelihood summed over the rows behind each design row, and e^-|eta|,
    which the next Newton step's ``expit`` of the same eta needs again."""
    # ln(1 + e^eta) as max(eta, 0) + ln(1 + e^-|eta|), the steps numpy's logaddexp takes,
    # on vectorised exp and log1p: a third of logaddexp's time, equal to rounding.
    low = np.abs(eta)
    np.exp(np.negative(low, out=low), out=low)  # in place: one array instead of three
    softplus = np.maximum(eta, 0.0)
    softplus += np.log1p(low)
    return float(events @ eta - trials @ softplus), low


def _column_scaling(
    design: np.ndarray, trials: np.ndarray, wsum: float | None = None
) -> tuple[np.ndarray, np.ndarray]:
    """Centre (weighted mean) and scale (weighted sd) of each non-intercept column,
    all columns at once (``wsum``: the trials' sum, when known)."""
    m, p = design.shape
    wsum = float(trials.sum()) if wsum is None else wsum
    if p == 1 or m == 0 or wsum <= 0:
        return np.zeros(p), np.ones(p)
    # One contiguous row per column: reductions along a row are several times faster than
    # down the strided columns of the design.
    cols = np.ascontiguousarray(design[:, 1:].T)
    # Divide by the largest magnitude first so that squares of 1e200 cannot overflow.
    big = np.abs(cols).max(axis=1)
    if not big.all():  # an all-zero column keeps centre 0 and scale 1
        centre, scale = np.zeros(p), np.ones(p)
        used = np.flatnonzero(big) + 1
        inner_centre, inner_scale = _column_scaling(design[:, np.r_[0, used]], trials, wsum)
        centre[used], scale[used] = inner_centre[1:], inner_scale[1:]
        return centre, scale
    col = cols / big[:, None]
    c = (col @ trials) / wsum
    s = np.sqrt((np.square(col - c[:, None]) @ trials) / wsum)
    centre, scale = np.zeros(p), np.ones(p)
    centre[1:] = c * big
    scale[1:] = np.where(s > 0, s * big, big)
    return centre, scale


def _largest_magnitude(v: np.ndarray) -> float:
    """float(np.abs(v).max()) for a few coefficients, read as Python floats."""
    values = v.tolist()
    total = sum(values)
    if total != total:  # a NaN (or opposite infinities): numpy's rule for NaN
        return float(np.abs(v).max())
    return max(map(abs, values))


def fit_logistic(
    design: np.ndarray,
    events: np.ndarray,
    trials: np.ndarray,
    start: np.ndarray | None = None,
    tol: float = 1e-10,
    *,
    finite: bool = False,
) -> LogisticFit:
    """Fit log-odds = design @ coef by maximum likelihood.

    ``design`` holds the intercept column; ``events`` and ``trials`` are per design row
    (trials may be weights). Columns are centred and scaled inside the solver so that
    magnitudes such as 1e200 or x**3 do not spoil the Newton steps. ``finite``: the
    caller has checked that the design is finite throughout.
    """
    # Floating-point errors are ignored once for the whole fit rather than in each of its
    # small solves: a failed solve shows as None (non-finite result) either way.
    with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
        return _fit_logistic(design, events, trials, start, tol, finite)


def _fit_logistic(
    design: np.ndarray,
    events: np.ndarray,
    trials: np.ndarray,
    start: np.ndarray | None,
    tol: float,
    finite: bool,
) -> LogisticFit:
    # A scan makes thousands of these fits on a few hundred rows each, where the count of
    # numpy calls, not arithmetic, sets the time: hence the terse, call-sparing steps.
    design = np.asarray(design, dtype=float)
    events = np.asarray(events, dtype=float)
    trials = np.asarray(trials, dtype=float)
    m, p = design.shape
    nobs = float(trials.sum())
    if m == 0:
        raise ValueError("no rows to fit")
    if not finite and not np.isfinite(design).all():
        raise ValueError("design holds non-finite values")

    centre, scale = _column_scaling(design, trials, nobs)
    z = (design - centre) / scale
    z[:, 0] = 1.0
    if not np.isfinite(z).all():
        raise ValueError("design columns out of floating-point range")

    # Drop linearly dependent columns (they get coefficient 0) and say so. Only R of the
    # QR factorisation is needed (LAPACK's dgeqrf).
    root_w = np.sqrt(np.maximum(trials, 0))[:, None]
    packed = dense.qr_r(z * root_w, overwrite=True)
    diag = np.abs(np.diagonal(packed))
    keep = np.zeros(p, dtype=bool)  # beyond the rows' count a column cannot be independent
    keep[: diag.size] = diag > 1e-9 * max(1.0, float(diag.max(initial=0.0)))
    keep[0] = True
    rank_deficient = not bool(keep.all())
    zk = z[:, keep] if rank_deficient else z
    if rank_deficient:
        packed = dense.qr_r(zk * root_w, overwrite=True)
    # Newton runs on whitened columns zk R^-1 (weighted orthonormal, times sqrt(rows)):
    # centring and scaling alone leave two powers of a column with one extreme value
    # (z^-2 and z^-1 of a tiny shifted x) nearly collinear, and Newton then stalls.
    kept = zk.shape[1]
    whiten = packed[:kept, :kept] / np.sqrt(max(nobs, 1e-300))  # R is upper triangular
    unwhiten = dense.inverse_quiet(whiten)
    if unwhiten is None:  # kept columns have pivots above 1e-9 of the largest: not seen
        raise np.linalg.LinAlgError("design too nearly collinear to whiten")
    zk = zk @ unwhiten
    zt = np.ascontiguousarray(zk.T)

    total_events = float(events.sum())
    pbar = (total_events + 0.5) / (nobs + 1.0)
    beta = np.zeros(kept)
    beta[0] = np.log(pbar / (1 - pbar))
    if start is not None and not rank_deficient and start.shape == (p,):
        # start is given on the original scale; convert to the scaled one.
        b = start * scale
        b[0] = start[0] + float(np.sum(start[1:] * centre[1:]))
        beta = whiten @ b
        eta = zk @ beta
        ll, low = _loglik(eta, events, trials)
    else:
        # The usual start, the overall log-odds, is the same on every row.
        eta = np.full(zk.shape[0], beta[0])
        beta = whiten @ beta
        ll = float(beta[0] * total_events - nobs * np.logaddexp(0.0, beta[0]))
        low = np.exp(-np.abs(eta))
    converged = False
    creeping = 0
    for _ in range(_MAX_ITER):
        mu = _expit_low(eta, low)  # e^-|eta| kept from the step that reached eta
        fitted = trials * mu
        grad = zt @ (events - fitted)
        hess = (zt * (fitted * (1.0 - mu))) @ zk
        step = dense.solve_quiet(hess, grad)
        if step is None:
            step = np.linalg.lstsq(hess, grad, rcond=None)[0]
        t = 1.0
        floor = ll - 1e-12 * max(1.0, abs(ll))
        for _halving in range(40):
            new_beta = beta + t * step
            new_eta = zk @ new_beta
            new_ll, new_low = _loglik(new_eta, events, trials)
            if new_ll >= floor:
                break
            t *= 0.5
        gain = new_ll - ll
        beta, eta, ll, low = new_beta, new_eta, new_ll, new_low
        moved = t * _largest_magnitude(step)
        if abs(gain) <= tol * (abs(ll) + 0.1):
            # Steps are judged against the coefficients' size: one extreme design value
            # (a long tail, a negative power of a tiny shifted x) leaves the other rows a
            # small spread in the scaled column, so a legitimate scaled coefficient can be
            # 1e5 and settle only to rounding in its tenth digit.
            if moved < 1e-6 * max(1.0, _largest_magnitude(beta)):
                converged = True
                break
            # Gains vanish while the steps do not: coefficients drifting to infinity.
            creeping = creeping + 1 if moved > 1e-3 else 0
            if creeping >= _CREEP_STEPS and float(np.abs(eta).max()) > _SEPARATION_ETA:
                break

    # Separation: no maximum exists, so Newton never settles, and the fitted log-odds run off
    # at rows that are all events or all non-events. A long tail can give |log-odds| > 30 at
    # a converged fit; that is a legitimate fit, not separation.
    separated = False
    if not converged:
        pure = (events <= 0) | (events >= trials)
        separated = bool(np.any((np.abs(eta) > _SEPARATION_ETA) & pure & (trials > 0)))

    coef_scaled = np.zeros(p)
    coef_scaled[keep] = unwhiten @ beta
    coef = coef_scaled / scale
    coef[0] = coef_scaled[0] - float((coef[1:] * centre[1:]).sum())
    return LogisticFit(
        coef=coef,
        llf=ll,
        nobs=nobs,
        n_params=kept,
        converged=converged,
        separated=separated,
        rank_deficient=rank_deficient,
    )


def lr_test(restricted: LogisticFit, full: LogisticFit, df: int) -> tuple[float, float]:
    """Likelihood-ratio chi-square and p-value of ``full`` against nested ``restricted``."""
    chi2 = max(0.0, 2.0 * (full.llf - restricted.llf))
    if df <= 0:
        return chi2, float("nan")
    # Not scipy.stats.chi2.sf: importing scipy adds tenths of a second to every start.
    return chi2, chi2_upper(df, chi2)

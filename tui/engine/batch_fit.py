"""Many logistic fits on the same counts at once: one vectorised Newton over a stack of designs.

A search (FP1 and FP2 powers, hinge knots, indicator cuts) fits tens of designs of the same
shape to the same (x, rows, events) triples. One at a time, the count of numpy calls sets
the time; stacked, each Newton step is a handful of calls over every candidate at once.

The stack only ranks the members. Every member it cannot settle cleanly (a singular or
nearly dependent design, no convergence within the step budget, separation) is handed
back as unsettled, so the caller fits it one at a time with ``fit_logistic``, which has the
last word on status. The solver follows ``fit_logistic`` step by step (the same centring
and scaling, start, step halving and convergence rule), so the log-likelihoods agree with
it to round-off.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tui.engine import dense

_MAX_ITER = 50
_RANK_MARGIN = 1e-6
"""A design whose QR diagonal falls within this share of its largest is left to the single
fit (whose own rank rule, at 1e-9, decides it)."""
_SEPARATION_ETA = 30.0
_CHUNK_FLOATS = 4_000_000
"""Designs per stack are limited so that one stack holds at most this many numbers."""


@dataclass(frozen=True)
class BatchFits:
    """Log-likelihoods of a stack of designs; ``settled[i]`` False means fit member i alone."""

    llf: np.ndarray
    """Log-likelihood on the row scale (NaN where unsettled)."""
    settled: np.ndarray
    """Converged, full rank and clear of separation in the stacked solver."""
    coef: np.ndarray
    """Coefficients on the original design columns (members × columns; NaN where
    unsettled): the solution the log-likelihood was taken at."""
    refined: np.ndarray
    """Settled members whose coefficients were refined to the maximum (``refine_within``)."""

    def __getitem__(self, members: slice) -> BatchFits:
        """The figures of some members (a slice of the stack)."""
        return BatchFits(
            self.llf[members], self.settled[members], self.coef[members], self.refined[members]
        )


def fit_stack(
    designs: np.ndarray,
    events: np.ndarray,
    trials: np.ndarray,
    tol: float = 1e-10,
    overwrite: bool = False,
    refine_within: float | None = None,
    groups: np.ndarray | None = None,
) -> BatchFits:
    """Fit log-odds = designs[i] @ coef for every i (designs: members × rows × columns,
    intercept column first), all on the same events and trials. With ``overwrite`` the
    designs may be scaled in place (no copy when each member's columns lie contiguous in
    memory, as ``stacked_designs`` builds them).

    With ``refine_within`` the settled members whose log-likelihood lies within that
    share of the best (``refine_within * (|best| + 1)``; ``inf`` for all) take further
    Newton steps until the steps vanish, so that their coefficients are the maximum to
    rounding, as close to it as ``fit_logistic``'s (``refined`` marks them; a member whose
    further steps go wrong is left unsettled). ``groups`` (a label per member) makes the
    best that of each member's own group: several searches then share one stack.

    Every member's figures are its own: whatever else is in the stack, they change only
    by rounding (BLAS may sum in another order)."""
    designs = np.asarray(designs, dtype=float)
    k, m, p = designs.shape
    per = max(1, _CHUNK_FLOATS // max(1, m * p))
    if k > per:
        parts = [
            fit_stack(
                designs[i : i + per],
                events,
                trials,
                tol,
                overwrite,
                refine_within,
                None if groups is None else groups[i : i + per],
            )
            for i in range(0, k, per)
        ]
        return BatchFits(
            np.concatenate([b.llf for b in parts]),
            np.concatenate([b.settled for b in parts]),
            np.concatenate([b.coef for b in parts]),
            np.concatenate([b.refined for b in parts]),
        )
    events = np.asarray(events, dtype=float)
    trials = np.asarray(trials, dtype=float)
    llf = np.full(k, np.nan)
    settled = np.zeros(k, dtype=bool)
    coef = np.full((k, p), np.nan)
    refined = np.zeros(k, dtype=bool)
    finite = np.isfinite(designs).all(axis=(1, 2))
    if m == 0 or not finite.any():
        return BatchFits(llf, settled, coef, refined)
    # One contiguous row per design column: the reductions run along rows.
    zt = designs.transpose(0, 2, 1)
    zt = np.ascontiguousarray(zt) if overwrite else np.array(zt, order="C")
    zt, centre, scale = _scaled(zt, trials)
    clear, gram = _clearly_full_rank(zt, trials)
    full_rank = finite & clear
    if not full_rank.any():
        return BatchFits(llf, settled, coef, refined)
    idx = np.flatnonzero(full_rank)
    if idx.size < k:
        zt = zt[idx]
        gram = None if gram is None else gram[idx]
    if not np.all(trials >= 0):  # the Gram matrix was weighted by max(trials, 0)
        gram = None
    ll, ok, beta, eta = _newton(zt, events, trials, tol, gram)
    if refine_within is not None and ok.any():
        near = _near_best(ll, ok, refine_within, None if groups is None else groups[idx])
        if near.size:
            good, beta[near], ll[near] = _refine(
                zt[near], beta[near], eta[near], ll[near], events, trials
            )
            ok[near[~good]] = False
            refined[idx[near[good]]] = True
    llf[idx] = np.where(ok, ll, np.nan)
    settled[idx] = ok
    # Back to the original columns, as fit_logistic does: beta / scale, and the centres
    # taken out of the intercept.
    won = idx[ok]
    unscaled = beta[ok] / scale[won]
    unscaled[:, 0] = beta[ok, 0] - (unscaled[:, 1:] * centre[won, 1:]).sum(axis=1)
    coef[won] = unscaled
    return BatchFits(llf, settled, coef, refined)


def _scaled(zt: np.ndarray, trials: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Centre (weighted mean) and scale (weighted sd) the non-intercept columns in place,
    as ``fit_logistic`` does; an all-zero column keeps centre 0 and scale 1.
    ``zt`` is members × columns × rows, C-contiguous; returned with the centres and
    scales (members × columns, the intercept's 0 and 1)."""
    w = trials / float(trials.sum())
    # Every column as one row of a 2-D array: matrix-vector products then go to BLAS,
    # several times faster than the same products over a strided 3-D view. The intercept
    # rows come along (they end at 0) and are set to 1 at the end.
    flat = zt.reshape(-1, zt.shape[2])
    big = np.maximum(flat.max(axis=1), -flat.min(axis=1))
    big[big == 0] = 1.0
    flat /= big[:, None]
    mean = flat @ w
    flat -= mean[:, None]
    s = np.sqrt(np.square(flat) @ w)
    s[s == 0] = 1.0
    flat /= s[:, None]
    zt[:, 0, :] = 1.0
    k, p = zt.shape[:2]
    centre = (mean * big).reshape(k, p)
    scale = (s * big).reshape(k, p)
    centre[:, 0], scale[:, 0] = 0.0, 1.0
    return zt, centre, scale


def _clearly_full_rank(zt: np.ndarray, trials: np.ndarray) -> tuple[np.ndarray, np.ndarray | None]:
    """Members whose weighted design is far from dependent columns: every diagonal entry
    of R (QR of the weighted design) above ``_RANK_MARGIN`` of the largest; with the
    Gram matrices weighted by the trials (None when not computed).

    R's diagonal is that of the Cholesky factor of the weighted Gram matrix, several times
    cheaper to get; the Gram matrix squares the rounding, so only members it puts clear of
    the margin (by a factor of 100, far beyond that rounding) are taken from it, and the
    rest are decided by the QR itself.
    """
    k, p, m = zt.shape
    if m < p:
        return np.zeros(k, dtype=bool), None
    w = np.maximum(trials, 0)
    gram = (zt * w) @ zt.transpose(0, 2, 1)
    try:
        diag = np.diagonal(np.linalg.cholesky(gram), axis1=1, axis2=2)
        top = np.maximum(1.0, diag.max(axis=1))
        clear = (diag > 100 * _RANK_MARGIN * top[:, None]).all(axis=1)
    except np.linalg.LinAlgError:  # some member not numerically positive definite
        clear = np.zeros(k, dtype=bool)
    full = clear.copy()
    unsure = np.flatnonzero(~clear)
    if unsure.size:
        weighted = zt[unsure] * np.sqrt(w)
        r = np.linalg.qr(weighted.transpose(0, 2, 1), mode="r")
        diag = np.abs(np.diagonal(r, axis1=1, axis2=2))
        top = np.maximum(1.0, diag.max(axis=1))
        full[unsure] = (diag > _RANK_MARGIN * top[:, None]).all(axis=1)
    return full, gram


def _loglik(eta: np.ndarray, events: np.ndarray, trials: np.ndarray) -> np.ndarray:
    # ln(1 + e^eta) as max(eta, 0) + ln(1 + e^-|eta|): several times faster than logaddexp,
    # equal to rounding (the stack only ranks; single fits give the figures).
    soft = np.log1p(np.exp(-np.abs(eta)))
    soft += np.maximum(eta, 0.0)
    return eta @ events - soft @ trials


def _expit(eta: np.ndarray) -> np.ndarray:
    """1 / (1 + e^-eta), several times faster than scipy's expit; equal to rounding."""
    with np.errstate(over="ignore"):
        out = np.exp(-eta)
    out += 1.0
    return np.reciprocal(out, out=out)


def _newton(
    zt: np.ndarray,
    events: np.ndarray,
    trials: np.ndarray,
    tol: float,
    gram: np.ndarray | None = None,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Plain Newton-Raphson (iteratively reweighted least squares) on every member at once;
    returns log-likelihoods, which members converged cleanly, their coefficients on the
    scaled columns (members × columns) and their log-odds (members × rows).

    No step halving: a member whose steps do not shrink, or whose log-odds run off, is
    simply left unsettled for the single fit, which halves steps and judges separation.
    Converged means the Newton decrement g'H^-1 g, twice the log-likelihood still to gain
    near the maximum, is below ``tol`` times the rows: the reported log-likelihood is then
    the maximum to far better than the window within which members are refitted alone.

    ``gram``, the designs' Gram matrices weighted by the trials, gives the first step for
    free: at the start every row has the same fitted rate, so the Hessian is the Gram
    matrix times rate × (1 − rate) and the residuals are the same for every member.
    """
    k, p, m = zt.shape
    nobs = float(trials.sum())
    pbar = (float(events.sum()) + 0.5) / (nobs + 1.0)
    converged = np.zeros(k, dtype=bool)
    broken = np.zeros(k, dtype=bool)
    final_eta = np.zeros((k, m))
    final_beta = np.full((k, p), np.nan)
    limit = tol * max(1.0, nobs)
    # Working arrays hold the members still iterating; they shrink as members finish.
    active = np.arange(k)
    za = zt
    beta = np.zeros((k, 1, p))
    beta[:, 0, 0] = np.log(pbar / (1 - pbar))
    eta = np.full((k, m), beta[0, 0, 0])
    for it in range(_MAX_ITER):
        if it == 0 and gram is not None:
            rate = 1.0 / (1.0 + np.exp(-beta[0, 0, 0]))
            grad = (za @ (events - trials * rate))[:, :, None]
            hess = gram * (rate * (1.0 - rate))
        else:
            grad, hess = _gradient_hessian(za, eta, events, trials)
        step = _solve(hess, grad)
        decrement = (grad * step).sum(axis=(1, 2))
        bad = ~np.isfinite(decrement) | (decrement < 0)
        step[bad] = 0.0
        beta += step.transpose(0, 2, 1)
        eta = (beta @ za)[:, 0, :]
        runaway = np.abs(eta).max(axis=1) > _SEPARATION_ETA
        done = (decrement <= limit) & ~bad
        broken[active[bad | (runaway & ~done)]] = True
        converged[active[done]] = True
        final_eta[active[done]] = eta[done]
        final_beta[active[done]] = beta[done, 0]
        going = ~done & ~bad & ~runaway
        if not going.any():
            break
        if not going.all():
            active, za = active[going], za[going]
            beta, eta = beta[going], eta[going]
    ok = converged & ~broken
    ll = np.full(k, np.nan)
    if ok.any():
        ll[ok] = _loglik(final_eta[ok], events, trials)
    return ll, ok, final_beta, final_eta


def _near_best(
    ll: np.ndarray, ok: np.ndarray, within: float, groups: np.ndarray | None
) -> np.ndarray:
    """Indices of the ok members within ``within * (|best| + 1)`` of the best ok member
    of their group (of all, without groups)."""
    labels = np.zeros(ll.size, dtype=int) if groups is None else np.asarray(groups)
    near = np.zeros(ll.size, dtype=bool)
    for label in np.unique(labels[ok]):
        mine = ok & (labels == label)
        best = float(ll[mine].max())
        near |= mine & (ll >= best - within * (abs(best) + 1.0))
    return np.flatnonzero(near)


_REFINE_STEPS = 4
_REFINE_STOP = 1e-11
"""Refinement ends when a step is below this share of the coefficients' size (scaled
columns): at a maximum Newton's steps shrink quadratically to rounding, near separation
they stay far above it."""


def _refine(
    zt: np.ndarray,
    beta: np.ndarray,
    eta: np.ndarray,
    ll: np.ndarray,
    events: np.ndarray,
    trials: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Newton steps from converged coefficients (on the scaled columns; ``eta`` their
    log-odds) until every step
    is below ``_REFINE_STOP`` of the coefficients' size; returns which members ended
    cleanly, their coefficients and log-likelihoods.

    The stack's convergence rule stops once the log-likelihood is settled, when the
    coefficients can still be a step short (1e-7 of their size); from there Newton needs
    one or two steps more. A member whose steps do not vanish within ``_REFINE_STEPS``
    is not clean: near separation the log-likelihood creeps up by ever smaller gains while
    the coefficients keep moving by steps that do not shrink. Nor is one whose log-odds
    reach ``_SEPARATION_ETA``, whose refined log-likelihood fell beyond rounding, or
    which turned non-finite.
    """
    out = beta.copy()
    stopped = np.zeros(len(beta), dtype=bool)
    # Working arrays hold the members still stepping, as in ``_newton``.
    at, za, b, eta = np.arange(len(beta)), zt, beta.copy(), eta.copy()
    for _ in range(_REFINE_STEPS):
        grad, hess = _gradient_hessian(za, eta, events, trials)
        step = _solve(hess, grad)[:, :, 0]
        b += step
        size = np.maximum(1.0, np.abs(b).max(axis=1))
        moving = ~(np.abs(step).max(axis=1) <= _REFINE_STOP * size)
        out[at] = b
        stopped[at[~moving]] = True
        if not moving.any():
            break
        if not moving.all():
            at, za, b = at[moving], za[moving], b[moving]
        eta = (b[:, None, :] @ za)[:, 0, :]
    eta = (out[:, None, :] @ zt)[:, 0, :]
    new_ll = _loglik(eta, events, trials)
    good = stopped & np.isfinite(new_ll) & np.isfinite(out).all(axis=1)
    good &= new_ll >= ll - 1e-9 * (np.abs(ll) + 1.0)
    good &= np.abs(eta).max(axis=1) <= _SEPARATION_ETA
    return good, out, np.where(good, new_ll, ll)


def _gradient_hessian(
    za: np.ndarray, eta: np.ndarray, events: np.ndarray, trials: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """Gradient (members × columns × 1) and Hessian of the log-likelihood at eta.

    Overwrites eta (recomputed after the step)."""
    # mu, trials * mu, the residuals and the weights trials * mu * (1 - mu), each written
    # over the last: every pass over the stack costs about as much as its arithmetic.
    mu = _expit(eta)
    fitted = np.multiply(trials, mu, out=eta)
    resid = np.subtract(events, fitted)
    mu *= fitted
    weight = np.subtract(fitted, mu, out=mu)
    grad = za @ resid[:, :, None]
    hess = (za * weight[:, None, :]) @ za.transpose(0, 2, 1)
    return grad, hess


def _solve(hess: np.ndarray, grad: np.ndarray) -> np.ndarray:
    """Every member's Newton step (members × columns × 1); NaN for a singular Hessian.
    Through numpy's LAPACK kernel directly: numpy.linalg.solve's checks cost more than
    the solves of a few unknowns."""
    step = dense.solve(hess, grad[:, :, 0])
    if step is None:  # some member singular or non-finite: member by member
        return np.stack([_solve_or_nan(h, g) for h, g in zip(hess, grad, strict=True)])
    return step[:, :, None]


def _solve_or_nan(h: np.ndarray, g: np.ndarray) -> np.ndarray:
    try:
        return np.linalg.solve(h, g)
    except np.linalg.LinAlgError:
        return np.full(g.shape, np.nan)

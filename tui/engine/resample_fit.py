"""One design fitted to many reweightings of the same counts at once.

A bootstrap resample of rows, reduced to counts, is the same cells (x values or bins) with
new numbers of events and non-events. The design matrix does not change, so every resample
of one design is a Newton iteration on a stack of weight vectors: one matrix product per
step for all of them, where fitting each in turn would repeat the set-up hundreds of times.
Only the log-likelihood and whether each fit is usable are kept: that is all a choice by
AIC needs.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tui.engine.fitting import LogisticFit

_MAX_ITER = 30
_HALVINGS = 20


@dataclass(frozen=True)
class StackedFits:
    """Log-likelihoods of one design under each weighting."""

    llf: np.ndarray
    """Log-likelihood per weighting (row scale)."""
    ok: np.ndarray
    """Converged and not separated, per weighting."""


def fit_stacked(
    design: np.ndarray,
    events: np.ndarray,
    trials: np.ndarray,
    start: LogisticFit | None = None,
    tol: float = 1e-9,
) -> StackedFits:
    """Maximum likelihood of log-odds = design @ coef for each row of ``events`` and
    ``trials`` (weightings × cells). ``start`` is a fit of the same design (usually to the
    original counts), where every resample's Newton steps begin. Run it under
    ``fitting.one_blas_thread``: the products are small, and BLAS threads only contend."""
    design = np.asarray(design, dtype=float)
    b, m = events.shape
    # Whiten the columns once on the average weighting: the steps are then well scaled.
    centre = np.average(design, axis=0, weights=trials.mean(axis=0))
    centre[0] = 0.0
    z = design - centre
    spread = np.sqrt(np.average(z * z, axis=0, weights=trials.mean(axis=0)))
    spread[0] = 1.0
    spread[spread == 0] = 1.0
    z = z / spread
    p = z.shape[1]
    if start is not None and start.coef.shape == (p,):
        beta0 = start.coef * spread
        beta0[0] = start.coef[0] + float(start.coef[1:] @ centre[1:])
    else:
        rate = (events.sum() + 0.5) / (trials.sum() + 1.0)
        beta0 = np.zeros(p)
        beta0[0] = np.log(rate / (1 - rate))
    beta = np.tile(beta0, (b, 1))
    outer = (z[:, :, None] * z[:, None, :]).reshape(m, p * p)
    ridge = 1e-10 * np.eye(p)

    def terms(
        eta: np.ndarray, ev: np.ndarray = events, tr: np.ndarray = trials
    ) -> tuple[np.ndarray, np.ndarray]:
        # One exp gives both the fitted probability and ln(1 + e^eta), without overflow.
        small = np.exp(-np.abs(eta))
        softplus = np.maximum(eta, 0.0) + np.log1p(small)
        mu = np.where(eta >= 0, 1.0, small) / (1.0 + small)
        return mu, (ev * eta - tr * softplus).sum(axis=1)

    eta = beta @ z.T
    mu, ll = terms(eta)
    done = np.zeros(b, dtype=bool)
    for _ in range(_MAX_ITER):
        fitted = trials * mu
        grad = (events - fitted) @ z
        hess = ((fitted * (1.0 - mu)) @ outer).reshape(b, p, p) + ridge
        try:
            step = np.linalg.solve(hess, grad[:, :, None])[:, :, 0]
        except np.linalg.LinAlgError:
            step = np.einsum("bij,bj->bi", np.linalg.pinv(hess), grad)
        step[done] = 0.0
        t = np.ones(b)
        floor = ll - 1e-12 * np.maximum(1.0, np.abs(ll))
        new_beta = beta + step
        new_eta = new_beta @ z.T
        new_mu, new_ll = terms(new_eta)
        for _halving in range(_HALVINGS):
            worse = ~(new_ll >= floor)
            if not worse.any():
                break
            t[worse] *= 0.5
            new_beta[worse] = beta[worse] + t[worse, None] * step[worse]
            new_eta[worse] = new_beta[worse] @ z.T
            new_mu[worse], new_ll[worse] = terms(new_eta[worse], events[worse], trials[worse])
        gain = new_ll - ll
        moved = t * np.abs(step).max(axis=1)
        beta, eta, mu, ll = new_beta, new_eta, new_mu, new_ll
        # A Newton gain this small leaves the next one negligible for a choice by AIC.
        done |= (np.abs(gain) <= tol * (np.abs(ll) + 1.0)) & (moved < 1e-4)
        if done.all():
            break
    # As in fitting.py, a large fitted log-odds at a converged fit is a long tail, not
    # separation: a separated resample never settles, so ``done`` stays False for it.
    ok = done & np.isfinite(ll)
    return StackedFits(llf=ll, ok=ok)

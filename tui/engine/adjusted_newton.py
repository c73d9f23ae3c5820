"""Row-level logistic fits that share their covariate block across columns and forms.

An adjusted check fits intercept + covariates + a form of one column, on every row, for
many columns and many forms. The covariate columns, their centring and scaling, the rows
they leave out and the covariates-only fit are the same for all of them, so they are
computed once (``CovariateBlock``) and every fit starts from the covariates-only fit.
The Newton steps are the plain ones of ``fitting.fit_logistic`` on standardised columns,
with the Bernoulli log-likelihood and the fitted probabilities taken from one exponential
per row, and a small dense solve. Whenever a fit needs more than a full Newton step (step
halving, a nearly collinear design, fitted log-odds beyond ±30, no convergence), the fast
path gives up and ``fit_logistic`` fits that design, so hard cases behave exactly as before.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tui.engine import dense
from tui.engine.fitting import LogisticFit, fit_logistic

_MAX_ITER = 30
_STEP_DONE = 1e-5
"""A full Newton step smaller than this (standardised scale) leaves an error of its
square: the fit is converged far beyond what the likelihood-ratio statistic needs."""
_RANK_DOUBT = 1e-6
"""Cholesky pivots this small relative to the largest hand the rank question to the QR
of ``fit_logistic`` (its own threshold is 1e-9 on the same scale)."""
_SEPARATION_ETA = 30.0
_CHORD_STEPS = 12
_GAIN_DONE = 1e-9
"""Settled when the next chord step would raise the log-likelihood by less than this. The
figure returned is the likelihood where that step starts plus the step's predicted gain,
so no further pass over the rows is needed; with steps shrinking by at least half each
time, what is still missing is below the gain itself."""
_CHORD_RATE = 0.5
"""Steps that shrink by less than this per step hand over to full Newton steps."""
_WILD_STEP = 50.0
"""A step this long on standardised columns is no refinement of a warm start."""


def fitted_mean(eta: np.ndarray) -> np.ndarray:
    """Fitted probabilities from one exponential per row (numpy's exp is vectorised;
    scipy's expit and numpy's logaddexp cost ten times more here)."""
    with np.errstate(over="ignore"):
        return 1.0 / (1.0 + np.exp(-eta))


def loglik(eta: np.ndarray, events: np.ndarray, trials: np.ndarray | None) -> float:
    """Bernoulli log-likelihood summed over the rows (``trials`` None: one per row)."""
    soft = np.maximum(eta, 0.0) + np.log1p(np.exp(-np.abs(eta)))
    return float(events @ eta - (soft.sum() if trials is None else trials @ soft))


def scaling(columns: np.ndarray, trials: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Weighted mean and sd of each row of ``columns`` (columns × rows); sd 1 if constant."""
    total = float(trials.sum())
    centre = (columns @ trials) / total
    spread = np.sqrt(np.maximum((np.square(columns - centre[:, None]) @ trials) / total, 0.0))
    return centre, np.where(spread > 0, spread, 1.0)


@dataclass(frozen=True, eq=False)
class CovariateBlock:
    """What every fit adjusted for the same covariates shares, on the usable rows."""

    usable: np.ndarray
    """Rows with every covariate present and weight above zero (boolean, all rows)."""
    design: np.ndarray
    """Original covariate columns, usable rows × covariates."""
    standard: np.ndarray
    """Intercept and standardised covariates, transposed: (1 + covariates) × usable rows."""
    centre: np.ndarray
    """Centres of the covariates."""
    scale: np.ndarray
    """Scales of the covariates."""
    events: np.ndarray
    """Events (or weighted events) on the usable rows."""
    trials: np.ndarray
    """1 per row, or the row weights, on the usable rows."""
    beta: np.ndarray
    """Covariates-only fit on the standardised scale."""
    unit: bool
    """Every row counts once (no weights)."""
    base_mean: np.ndarray
    """Fitted probabilities of the covariates-only fit, per usable row."""
    base_root: np.ndarray
    """Square roots of that fit's Newton weights, per usable row."""
    weighted: np.ndarray
    """``standard`` times ``base_root`` (covariate rows of every Hessian at that fit)."""
    cross: np.ndarray
    """``weighted @ weighted.T``: the covariate block of that Hessian on every usable row."""
    base_eta: np.ndarray
    """Log-odds of that fit, per usable row."""
    base_resid: np.ndarray
    """Events minus that fit's expected events, per usable row."""

    @property
    def width(self) -> int:
        """Intercept plus covariate columns."""
        return int(self.standard.shape[0])


def covariate_block(
    covariates: np.ndarray, y: np.ndarray, weights: np.ndarray | None = None
) -> CovariateBlock:
    """Standardise the covariates once and fit them alone (the start of every fit)."""
    covariates = np.asarray(covariates, dtype=float).reshape(np.shape(y)[0], -1)
    usable = np.all(np.isfinite(covariates), axis=1)
    w = np.ones(usable.size) if weights is None else np.asarray(weights, dtype=float)
    usable &= w > 0
    design = covariates[usable]
    trials = w[usable]
    events = trials * np.asarray(y, dtype=float)[usable]
    unit = weights is None
    cols = np.ascontiguousarray(design.T)
    centre, scale = scaling(cols, trials)
    standard = np.vstack([np.ones((1, trials.size)), (cols - centre[:, None]) / scale[:, None]])
    beta = np.zeros(standard.shape[0])
    if trials.size:
        pbar = (float(events.sum()) + 0.5) / (float(trials.sum()) + 1.0)
        beta[0] = np.log(pbar / (1 - pbar))
        found = newton(standard, events, None if unit else trials, beta)
        if found is not None:
            beta = found[0]
    # Every column without missing values shares these; one with some removes its rows.
    base_eta = beta @ standard
    base_mean = fitted_mean(base_eta)
    root = np.sqrt(trials * base_mean * (1.0 - base_mean))
    weighted = standard * root
    cross = weighted @ weighted.T
    resid = events - trials * base_mean
    return CovariateBlock(usable, design, standard, centre, scale, events, trials, beta, unit,
                          base_mean, root, weighted, cross, base_eta, resid)  # fmt: skip


def newton(
    xt: np.ndarray, events: np.ndarray, trials: np.ndarray | None, start: np.ndarray
) -> tuple[np.ndarray, float] | None:
    """Maximum likelihood on standardised columns ``xt`` (columns × rows) from ``start``.

    Returns (coefficients, log-likelihood), or None when plain full Newton steps from the
    start do not settle (the caller then fits with ``fit_logistic``, which halves steps).
    The log-likelihood is strictly concave on a full-rank design, so steps that settle
    have found its maximum; it is computed once, at the end.
    """
    beta = np.array(start, dtype=float)
    eta = beta @ xt
    for iteration in range(_MAX_ITER):
        mu = fitted_mean(eta)
        if trials is None:
            resid, weight = events - mu, mu * (1.0 - mu)
        else:
            fitted = trials * mu
            resid, weight = events - fitted, fitted * (1.0 - mu)
        grad = xt @ resid
        root = xt * np.sqrt(weight)
        hessian = root @ root.T
        chol = dense.cholesky_lower(hessian)
        if chol is None:
            return None
        if iteration == 0:
            pivots = np.abs(np.diagonal(chol))
            if pivots.min() < _RANK_DOUBT * pivots.max():
                return None
        step = dense.solve(hessian, grad)
        if step is None:
            return None
        moved = float(np.abs(step).max())
        if not moved < _WILD_STEP:
            return None
        beta = beta + step
        eta = beta @ xt
        if moved < _STEP_DONE:
            if float(np.abs(eta).max(initial=0.0)) > _SEPARATION_ETA:
                return None  # fitted probabilities at 0 or 1: let fit_logistic judge
            return beta, loglik(eta, events, trials)
    return None


def chord(
    parts: tuple[np.ndarray, np.ndarray],
    hessian: np.ndarray,
    events: np.ndarray,
    trials: np.ndarray | None,
    start: np.ndarray,
    eta: np.ndarray | None = None,
) -> tuple[np.ndarray, float | None]:
    """Newton steps that keep one Hessian (the chord method), on ``parts`` = covariate
    rows and form rows of the standardised design.

    The Hessian at the covariates-only fit has the same covariate block for every form of
    a column, so it costs only the form's own rows; each step then costs two passes over
    the rows instead of a cross product. Converges linearly, at a rate set by how far the
    form moves the fitted probabilities. Returns (coefficients, log-likelihood) when
    settled, or (coefficients so far, None) when the steps do not shrink fast enough (the
    caller goes on with full Newton steps from there). ``eta``: the start's log-odds, when
    the caller has them without a pass over the design.
    """
    top, low = parts
    c = top.shape[0]
    beta = np.array(start, dtype=float)
    kept = _kept_inverse(hessian)
    if kept is None:
        return beta, None
    eta = np.array(beta[:c] @ top + beta[c:] @ low if eta is None else eta, dtype=float)
    # Buffers reused by every step: no temporary the size of the rows is made per step.
    down, resid = np.empty_like(eta), np.empty_like(eta)
    expected = 1.0 if trials is None else trials
    previous = np.inf
    for _ in range(_CHORD_STEPS):
        _residuals(eta, events, expected, down, resid)
        grad = np.concatenate([top @ resid, low @ resid])
        step = kept @ grad
        moved = float(np.abs(step).max())
        if not moved < _WILD_STEP or moved > _CHORD_RATE * previous:
            return beta, None
        gain = 0.5 * float(grad @ step)
        if gain < _GAIN_DONE:
            if float(np.abs(eta).max(initial=0.0)) > _SEPARATION_ETA:
                return beta, None
            return beta + step, _loglik_down(eta, down, events, trials) + gain
        beta = beta + step
        np.dot(beta[:c], top, out=eta)
        # The form's share into a kept buffer (``down`` is free until the next step).
        if low.shape[0] == 1:
            np.multiply(low[0], beta[c], out=down)
        else:
            np.dot(beta[c:], low, out=down)
        eta += down
        previous = moved
    return beta, None


def _residuals(
    eta: np.ndarray,
    events: np.ndarray,
    expected: float | np.ndarray,
    down: np.ndarray,
    resid: np.ndarray,
) -> None:
    """exp(-eta) into ``down`` and events minus expected events into ``resid``, in place
    (kept buffers: no row-sized temporary per step)."""
    np.negative(eta, out=down)
    with np.errstate(over="ignore"):
        np.exp(down, out=down)
    np.add(down, 1.0, out=resid)
    np.divide(expected, resid, out=resid)  # expected events
    np.subtract(events, resid, out=resid)


def _kept_inverse(hessian: np.ndarray) -> np.ndarray | None:
    """The inverse a chord keeps for every step; None when the design is in doubt (no
    Cholesky factor, or pivots small enough to hand the rank question on)."""
    chol = dense.cholesky_lower(hessian)
    if chol is None:
        return None
    pivots = np.abs(np.diagonal(chol))
    if pivots.min() < _RANK_DOUBT * pivots.max():
        return None
    return dense.inverse(hessian)


def chord_many(
    top: np.ndarray,
    lows: np.ndarray,
    hessians: list[np.ndarray],
    events: np.ndarray,
    trials: np.ndarray | None,
    starts: np.ndarray,
    etas: np.ndarray,
) -> list[tuple[np.ndarray, float | None]]:
    """``chord`` for several one-column forms of one column at once (``lows``: one
    standardised form row each; ``starts`` and ``etas``: one row each).

    Each form takes exactly the steps ``chord`` would take, and stops where it would;
    but a step of all of them reads the covariate rows once (one matrix product for the
    gradients, one for the log-odds) instead of once per form: those rows are most of
    what a step moves through memory, which is what the steps wait on.
    """
    k, c = lows.shape[0], top.shape[0]
    results: list[tuple[np.ndarray, float | None]] = [
        (np.array(start, dtype=float), None) for start in starts
    ]
    kept = [_kept_inverse(h) for h in hessians]
    live = np.array([j for j in range(k) if kept[j] is not None], dtype=int)
    if not live.size:
        return results
    inverse = np.array([kept[j] for j in live])
    beta = np.array(starts, dtype=float)[live]
    low, eta = lows[live], np.array(etas[live], dtype=float)
    down, resid = np.empty_like(eta), np.empty_like(eta)
    expected = 1.0 if trials is None else trials
    previous = np.full(live.size, np.inf)
    for _ in range(_CHORD_STEPS):
        _residuals(eta, events, expected, down, resid)
        grad = np.empty((live.size, c + 1))
        grad[:, :c] = resid @ top.T
        grad[:, c] = np.einsum("ij,ij->i", low, resid)
        step = np.einsum("ijk,ik->ij", inverse, grad)
        moved = np.abs(step).max(axis=1)
        gain = 0.5 * np.einsum("ij,ij->i", grad, step)
        going = np.ones(live.size, dtype=bool)
        for i, j in enumerate(live):
            if not moved[i] < _WILD_STEP or moved[i] > _CHORD_RATE * previous[i]:
                results[j], going[i] = (beta[i].copy(), None), False
            elif gain[i] < _GAIN_DONE:
                going[i] = False
                if float(np.abs(eta[i]).max(initial=0.0)) > _SEPARATION_ETA:
                    results[j] = (beta[i].copy(), None)
                else:
                    ll = _loglik_down(eta[i], down[i], events, trials) + float(gain[i])
                    results[j] = (beta[i] + step[i], ll)
        beta = beta + step
        if not going.all():
            live, beta, inverse = live[going], beta[going], inverse[going]
            low, moved = low[going], moved[going]
            if not live.size:
                return results
            eta, down = np.empty_like(low), np.empty_like(low)
            resid = np.empty_like(low)
        np.matmul(beta[:, :c], top, out=eta)
        np.multiply(low, beta[:, c:], out=down)  # ``down`` is free until the next step
        eta += down
        previous = moved
    for i, j in enumerate(live):
        results[j] = (beta[i], None)
    return results


def _loglik_down(
    eta: np.ndarray, down: np.ndarray, events: np.ndarray, trials: np.ndarray | None
) -> float:
    """``loglik`` from exp(-eta) already at hand (|eta| at most 30, so it is finite):
    log(1 + exp(eta)) = eta + log1p(exp(-eta)), accurate to a few units of eta's last digit."""
    soft = eta + np.log1p(down)
    return float(events @ eta - (soft.sum() if trials is None else trials @ soft))


@dataclass(frozen=True, eq=False)
class ColumnRows:
    """One column's usable rows within a block: the covariate part of every design."""

    block: CovariateBlock
    """The shared covariate block."""
    keep: np.ndarray | None
    """Block rows where x is finite; None when it is finite on every one."""
    x: np.ndarray
    """x on those rows."""
    standard: np.ndarray
    """Intercept and standardised covariates on those rows (columns × rows)."""
    events: np.ndarray
    """Events on those rows."""
    trials: np.ndarray
    """Trials (weights) on those rows."""
    base_mean: np.ndarray
    """Fitted probabilities of the covariates-only fit on those rows."""
    base_root: np.ndarray
    """Square roots of that fit's Newton weights."""
    covariate_cross: np.ndarray
    """Covariate block of the Hessian at that fit (shared by every form's chord steps)."""
    weighted: np.ndarray
    """``standard`` times ``base_root``: the covariate rows of every Hessian at that fit."""
    covariate_means: np.ndarray
    """Weighted means of the covariates on these rows (where curves are drawn)."""
    base_eta: np.ndarray
    """Log-odds of the covariates-only fit on those rows."""
    base_resid: np.ndarray
    """Events minus that fit's expected events on those rows."""

    @staticmethod
    def of(block: CovariateBlock, x_all: np.ndarray) -> ColumnRows:
        """Rows of ``x_all`` (every data row) that a fit of this column uses."""
        x = np.asarray(x_all, dtype=float)[block.usable]
        finite = np.isfinite(x)
        if finite.all():
            return ColumnRows(block, None, x, block.standard, block.events, block.trials,
                              block.base_mean, block.base_root, block.cross, block.weighted,
                              block.centre, block.base_eta, block.base_resid)  # fmt: skip
        keep = finite
        x = x[keep]
        standard = np.ascontiguousarray(block.standard[:, keep])
        events, trials = block.events[keep], block.trials[keep]
        base_mean, root = block.base_mean[keep], block.base_root[keep]
        weighted = np.ascontiguousarray(block.weighted[:, keep])
        if 4 * x.size > 3 * keep.size:
            # A few rows left out: take their share off the whole block's cross product
            # (a quarter of the rows at most, so nothing near cancels).
            gone = block.weighted[:, ~keep]
            cross = block.cross - gone @ gone.T
        else:
            cross = weighted @ weighted.T
        means = (block.design[keep].T @ trials) / float(trials.sum())
        eta, resid = block.base_eta[keep], block.base_resid[keep]
        return ColumnRows(block, keep, x, standard, events, trials, base_mean, root, cross,
                          weighted, means, eta, resid)  # fmt: skip

    @property
    def covariates(self) -> np.ndarray:
        """Original covariate columns on these rows."""
        design = self.block.design
        return design if self.keep is None else design[self.keep]

    def start(self, basis_t: np.ndarray) -> np.ndarray:
        """Covariates-only fit plus one Newton step for the first form column alone."""
        beta = np.zeros(self.standard.shape[0] + basis_t.shape[0])
        beta[: self.standard.shape[0]] = self.block.beta
        beta[self.standard.shape[0]] = self.lone_steps(basis_t[:1])[0]
        return beta

    def lone_steps(self, rows_t: np.ndarray) -> np.ndarray:
        """For each form row (standardised, rows × data rows), one Newton step from the
        covariates-only fit for that row alone (0 where it carries no information)."""
        rooted = rows_t * self.base_root
        info = np.einsum("ij,ij->i", rooted, rooted)
        pull = rows_t @ self.base_resid
        return np.divide(pull, info, out=np.zeros_like(pull), where=info > 0)

    def base_hessian(self, basis_t: np.ndarray) -> np.ndarray:
        """The Hessian of intercept + covariates + form at the covariates-only fit."""
        low = basis_t * self.base_root
        side = self.weighted @ low.T
        return np.block([[self.covariate_cross, side], [side.T, low @ low.T]])

    def fit(
        self, basis: np.ndarray, start: np.ndarray | None = None
    ) -> tuple[LogisticFit, np.ndarray | None]:
        """Intercept + covariates + ``basis`` (rows × form columns, original scale).

        Also returns the coefficients on the standardised scale (None when
        ``fit_logistic`` had to fit it): with zeros appended they start a design that adds
        columns after these (spline and quadratic after linear: x is standardised alike).
        """
        cols = np.ascontiguousarray(np.asarray(basis, dtype=float).reshape(self.x.size, -1).T)
        centre, scale = scaling(cols, self.trials)
        basis_t = (cols - centre[:, None]) / scale[:, None]
        eta = None
        if start is None or start.size != self.standard.shape[0] + basis_t.shape[0]:
            start = self.start(basis_t)
            # Only the first form column moved from the covariates-only fit.
            eta = self.base_eta + start[self.standard.shape[0]] * basis_t[0]
        trials = None if self.block.unit else self.trials
        hessian = self.base_hessian(basis_t)
        beta, ll = chord((self.standard, basis_t), hessian, self.events, trials, start, eta)
        return self._finish(cols, basis_t, centre, scale, beta, ll)

    def fit_many(self, bases: list[np.ndarray]) -> list[tuple[LogisticFit, np.ndarray | None]]:
        """``fit`` of several one-column forms (each rows long), from the covariates-only
        fit, their chord steps taken together (``chord_many``): the same fits."""
        cols = np.vstack([np.asarray(b, dtype=float).reshape(1, self.x.size) for b in bases])
        centre, scale = scaling(cols, self.trials)
        low = (cols - centre[:, None]) / scale[:, None]
        c = self.standard.shape[0]
        first = self.lone_steps(low)
        starts = np.zeros((len(bases), c + 1))
        starts[:, :c] = self.block.beta
        starts[:, c] = first  # as ``start`` gives each form alone
        etas = self.base_eta + first[:, None] * low
        # Each form's Hessian is the covariate block and that form's row and column of
        # the Hessian of all of them together (one product over the data rows).
        every = self.base_hessian(low)
        hessians = [
            every[np.ix_(own, own)] for own in (np.r_[:c, c + j] for j in range(len(bases)))
        ]
        trials = None if self.block.unit else self.trials
        steps = chord_many(self.standard, low, hessians, self.events, trials, starts, etas)
        return [
            self._finish(
                cols[j : j + 1], low[j : j + 1], centre[j : j + 1], scale[j : j + 1], beta, ll
            )  # fmt: skip
            for j, (beta, ll) in enumerate(steps)
        ]

    def _finish(
        self,
        cols: np.ndarray,
        basis_t: np.ndarray,
        centre: np.ndarray,
        scale: np.ndarray,
        beta: np.ndarray,
        ll: float | None,
    ) -> tuple[LogisticFit, np.ndarray | None]:
        """After the chord steps: the settled fit, else full Newton steps, else
        ``fit_logistic`` (``cols``: the form's columns × rows, original scale)."""
        trials = None if self.block.unit else self.trials
        found = None if ll is None else (beta, ll)
        if found is None:
            xt = np.vstack([self.standard, basis_t])
            found = newton(xt, self.events, trials, beta)
        if found is None:
            # fit_logistic judges this design (step halving, separation), starting from
            # where the fast steps stopped when they stayed finite.
            scale_all = np.concatenate(([1.0], self.block.scale, scale))
            centre_all = np.concatenate(([0.0], self.block.centre, centre))
            design = np.column_stack([np.ones(self.x.size), self.covariates, cols.T])
            coef = _original_scale(beta, centre_all, scale_all)
            start = coef if np.all(np.isfinite(coef)) else None
            return fit_logistic(design, self.events, self.trials, start=start), None
        beta, ll = found
        return self.settled(beta, ll, centre, scale), beta

    def settled(
        self, beta: np.ndarray, ll: float, centre: np.ndarray, scale: np.ndarray
    ) -> LogisticFit:
        """The fit that fast steps settled: ``beta`` on the standardised scale, the form's
        columns centred at ``centre`` and scaled by ``scale``."""
        scale_all = np.concatenate(([1.0], self.block.scale, scale))
        centre_all = np.concatenate(([0.0], self.block.centre, centre))
        return LogisticFit(
            coef=_original_scale(beta, centre_all, scale_all),
            llf=ll,
            nobs=float(self.trials.sum()),
            n_params=self.block.width + int(scale.size),
            converged=True,
            separated=False,
            rank_deficient=False,
        )


def _original_scale(beta: np.ndarray, centre: np.ndarray, scale: np.ndarray) -> np.ndarray:
    """Coefficients on standardised columns (intercept first) back on the original ones."""
    coef = beta / scale
    coef[0] = beta[0] - float(np.sum(coef[1:] * centre[1:]))
    return coef

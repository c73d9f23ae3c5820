"""Invented hard data sets and statsmodels references for the numerical-accuracy tests."""

from __future__ import annotations

import warnings

import numpy as np
import statsmodels.api as sm
from scipy.optimize import minimize
from scipy.special import expit


def standardised(basis: np.ndarray) -> np.ndarray:
    """Intercept plus each column centred and scaled (so statsmodels' solver is not
    thrown by magnitudes such as 1e6)."""
    basis = np.asarray(basis, dtype=float).reshape(len(basis), -1)
    big = np.abs(basis).max(axis=0)
    basis = basis / np.where(big > 0, big, 1.0)  # squares of 1e200 would overflow
    sd = basis.std(axis=0)
    sd[sd == 0] = 1.0
    return sm.add_constant((basis - basis.mean(axis=0)) / sd, has_constant="add")


def reference_deviance(
    basis: np.ndarray, y: np.ndarray, weights: np.ndarray | None = None, kind: str = "freq"
) -> float:
    """-2 log-likelihood of statsmodels GLM Binomial on the standardised design, recomputed
    from its parameters (its own figure rounds at extreme fitted log-odds), and the best
    of that and scipy's trust-exact optimiser started from statsmodels' answer."""
    X = standardised(basis)
    w = np.ones(len(y)) if weights is None else np.asarray(weights, dtype=float)
    extra = {"freq_weights": w} if kind == "freq" else {"var_weights": w}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = sm.GLM(y, X, family=sm.families.Binomial(), **extra).fit(tol=1e-13, maxiter=500)

        def nll(b: np.ndarray) -> float:
            eta = X @ b
            return -float(w @ (y * eta - np.logaddexp(0.0, eta)))

        def grad(b: np.ndarray) -> np.ndarray:
            return -X.T @ (w * (y - expit(X @ b)))

        def hess(b: np.ndarray) -> np.ndarray:
            mu = expit(X @ b)
            return X.T @ (X * (w * mu * (1 - mu))[:, None])

        second = minimize(nll, res.params, jac=grad, hess=hess, method="trust-exact")
    return 2.0 * min(nll(res.params), float(second.fun))


def long_tail(n: int, seed: int, top: float = 6.8) -> tuple[np.ndarray, np.ndarray]:
    """x uniform on (0, 1) for 98% of rows and 10^U(0, top) for 2%; logit -1 + 0.5 log1p x."""
    rng = np.random.default_rng(seed)
    x = rng.uniform(0, 1, n)
    tail = rng.random(n) < 0.02
    x[tail] = 10 ** rng.uniform(0, top, int(tail.sum()))
    y = (rng.random(n) < expit(-1 + 0.5 * np.log1p(x))).astype(float)
    return x, y


def cauchy_tanh(n: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """x standard Cauchy (drawn first), then y ~ Bernoulli(expit(-1 + 1.5 tanh x))."""
    rng = np.random.default_rng(seed)
    x = rng.standard_cauchy(n)
    y = (rng.random(n) < expit(-1 + 1.5 * np.tanh(x))).astype(float)
    return x, y

"""Small dense solves on numpy's own LAPACK kernels, so scipy.linalg need not be imported.

numpy.linalg's public functions check and convert their arguments on every call (several
microseconds each), and a scan makes tens of thousands of solves of a few unknowns; the
gufuncs under them do the same LAPACK work without that. Failures come back as None
instead of an exception: singular or not positive definite input leaves NaN in the result.
"""

from __future__ import annotations

import numpy as np

try:  # the kernels numpy.linalg itself calls; fall back to it if a release moves them
    from numpy.linalg import _umath_linalg as _kernels
except ImportError:  # pragma: no cover - depends on the numpy release
    _kernels = None


def _run(kernel: str, public, *args: np.ndarray) -> np.ndarray | None:
    """numpy's gufunc ``kernel`` on ``args`` (``public`` if the module moved); None when
    LAPACK failed (NaN in the result, or numpy.linalg's error)."""
    with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
        try:
            if _kernels is None:
                result = public(*args)
            else:
                result = getattr(_kernels, kernel)(*args, signature=_SIGNATURES[len(args)])
        except np.linalg.LinAlgError:
            return None
    return result if bool(np.isfinite(result).all()) else None


_SIGNATURES = {1: "d->d", 2: "dd->d"}


def solve(a: np.ndarray, b: np.ndarray) -> np.ndarray | None:
    """x with a @ x = b (LU with partial pivoting, LAPACK dgesv); None if a is singular."""
    return _run("solve1", np.linalg.solve, a, b)


def cholesky_lower(a: np.ndarray) -> np.ndarray | None:
    """Lower Cholesky factor of symmetric ``a`` (LAPACK dpotrf); None if not positive definite."""
    return _run("cholesky_lo", np.linalg.cholesky, a)


def inverse(a: np.ndarray) -> np.ndarray | None:
    """Inverse of square ``a`` (LU); None if singular."""
    return _run("inv", np.linalg.inv, a)


def qr_r(a: np.ndarray) -> np.ndarray:
    """R of the QR factorisation of ``a`` (rows × columns; LAPACK dgeqrf): its leading
    min(rows, columns) rows, upper triangular."""
    work = np.array(a, dtype=float, copy=True)
    with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
        if _kernels is None:
            return np.linalg.qr(work, mode="r")
        _kernels.qr_r_raw(work, signature="d->d")
    r = work[: min(work.shape), :].copy()
    for i in range(1, r.shape[0]):  # np.triu's masks cost more than these few rows
        r[i, :i] = 0.0
    return r

"""Small dense solves on numpy's own LAPACK kernels, so scipy.linalg need not be imported.

numpy.linalg's public functions check and convert their arguments on every call (several
microseconds each), and a scan makes tens of thousands of solves of a few unknowns; the
gufuncs under them do the same LAPACK work without that. Failures come back as None
instead of an exception: singular or not positive definite input leaves NaN in the result.
"""

from __future__ import annotations

import math

import numpy as np

try:  # the kernels numpy.linalg itself calls; fall back to it if a release moves them
    from numpy.linalg import _umath_linalg as _kernels
except ImportError:  # pragma: no cover - depends on the numpy release
    _kernels = None


def _run(kernel: str, public, *args: np.ndarray) -> np.ndarray | None:
    """numpy's gufunc ``kernel`` on ``args`` (``public`` if the module moved); None when
    LAPACK failed (NaN in the result, or numpy.linalg's error)."""
    with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
        return _run_quiet(kernel, public, *args)


def _run_quiet(kernel: str, public, *args: np.ndarray) -> np.ndarray | None:
    """``_run`` for a caller that already ignores invalid, overflow and divide errors."""
    try:
        if _kernels is None:
            result = public(*args)
        else:
            result = getattr(_kernels, kernel)(*args, signature=_SIGNATURES[len(args)])
    except np.linalg.LinAlgError:
        return None
    return result if _finite(result) else None


def _finite(a: np.ndarray) -> bool:
    """Every entry finite; a few entries are checked as Python floats, faster than a ufunc."""
    if a.size <= 64:
        return all(map(math.isfinite, a.ravel().tolist()))
    return bool(np.isfinite(a).all())


_SIGNATURES = {1: "d->d", 2: "dd->d"}


def solve(a: np.ndarray, b: np.ndarray) -> np.ndarray | None:
    """x with a @ x = b (LU with partial pivoting, LAPACK dgesv); None if a is singular."""
    return _run("solve1", np.linalg.solve, a, b)


def solve_quiet(a: np.ndarray, b: np.ndarray) -> np.ndarray | None:
    """``solve`` inside the caller's ``np.errstate`` (invalid, over and divide ignored): a
    Newton loop enters that once, not once a step."""
    return _run_quiet("solve1", np.linalg.solve, a, b)


def cholesky_lower(a: np.ndarray) -> np.ndarray | None:
    """Lower Cholesky factor of symmetric ``a`` (LAPACK dpotrf); None if not positive definite."""
    return _run("cholesky_lo", np.linalg.cholesky, a)


def inverse(a: np.ndarray) -> np.ndarray | None:
    """Inverse of square ``a`` (LU); None if singular."""
    return _run("inv", np.linalg.inv, a)


def inverse_quiet(a: np.ndarray) -> np.ndarray | None:
    """``inverse`` inside the caller's ``np.errstate`` (see ``solve_quiet``)."""
    return _run_quiet("inv", np.linalg.inv, a)


def qr_r(a: np.ndarray, overwrite: bool = False) -> np.ndarray:
    """R of the QR factorisation of ``a`` (rows × columns; LAPACK dgeqrf): its leading
    min(rows, columns) rows, upper triangular. ``overwrite``: ``a`` (a C-ordered float
    array) is scratch, factorised in place instead of copied."""
    usable = overwrite and a.dtype == np.float64 and a.flags.c_contiguous and a.flags.writeable
    work = a if usable else np.array(a, dtype=float, copy=True)
    with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
        if _kernels is None:
            return np.linalg.qr(work, mode="r")
        _kernels.qr_r_raw(work, signature="d->d")
    r = work[: min(work.shape), :].copy()
    for i in range(1, r.shape[0]):  # np.triu's masks cost more than these few rows
        r[i, :i] = 0.0
    return r

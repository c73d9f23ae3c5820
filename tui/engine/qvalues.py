"""Benjamini-Hochberg q-values (Benjamini & Hochberg 1995)."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np


def bh_qvalues(p_values: Sequence[float]) -> np.ndarray:
    """Step-up false discovery rate adjusted p-values, in input order.

    A missing (NaN) p-value stays NaN and does not count among the tests; the others are
    adjusted among themselves.
    """
    p = np.asarray(p_values, dtype=float)
    q = np.full(p.size, np.nan)
    known = ~np.isnan(p)
    q[known] = _bh(p[known])
    return q


def _bh(p: np.ndarray) -> np.ndarray:
    """q-values of p-values that are all present."""
    m = p.size
    if m == 0:
        return p
    order = np.argsort(p)
    ranked = p[order] * m / np.arange(1, m + 1)
    # Running minimum from the largest p down keeps the q-values monotone.
    ranked = np.minimum.accumulate(ranked[::-1])[::-1]
    q = np.empty(m)
    q[order] = np.minimum(ranked, 1.0)
    return q

"""Benjamini-Hochberg q-values (Benjamini & Hochberg 1995), by statsmodels."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from statsmodels.stats.multitest import multipletests


def bh_qvalues(p_values: Sequence[float]) -> np.ndarray:
    """Step-up false discovery rate adjusted p-values, in input order.

    A missing (NaN) p-value stays NaN and does not count among the tests; the others are
    adjusted among themselves.
    """
    p = np.asarray(p_values, dtype=float)
    q = np.full(p.size, np.nan)
    known = ~np.isnan(p)
    if known.any():
        q[known] = multipletests(p[known], method="fdr_bh")[1]
    return q

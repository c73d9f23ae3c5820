"""Benjamini-Hochberg q-values (Benjamini & Hochberg 1995), by statsmodels."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from statsmodels.stats.multitest import multipletests


def bh_qvalues(p_values: Sequence[float]) -> np.ndarray:
    """Step-up false discovery rate adjusted p-values, in input order."""
    p = np.asarray(p_values, dtype=float)
    if p.size == 0:
        return p
    return multipletests(p, method="fdr_bh")[1]

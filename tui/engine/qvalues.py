"""Benjamini-Hochberg q-values (Benjamini & Hochberg 1995).

The steps are those of statsmodels' ``multipletests(method="fdr_bh")``, operation for
operation, so the q-values are the same numbers (tests/test_qvalues_reference.py);
importing statsmodels here would add over a second to every start of the command.
"""

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
    if known.any():
        q[known] = _step_up(p[known])
    return q


def _step_up(p: np.ndarray) -> np.ndarray:
    """min over j >= i of p_(j) n / j, capped at 1, back in input order."""
    order = np.argsort(p)
    ranked = np.take(p, order)
    share = np.arange(1, ranked.size + 1) / float(ranked.size)
    adjusted = np.minimum.accumulate((ranked / share)[::-1])[::-1]
    adjusted[adjusted > 1] = 1
    out = np.empty_like(adjusted)
    out[order] = adjusted
    return out

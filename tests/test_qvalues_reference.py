"""Benjamini-Hochberg q-values."""

import numpy as np

from tui.engine.qvalues import bh_qvalues


def test_published_small_example():
    # R9: Benjamini & Hochberg (1995), JRSS B 57(1); values worked by hand.
    np.testing.assert_allclose(bh_qvalues([0.01, 0.04, 0.03, 0.005]), [0.02, 0.04, 0.04, 0.02])


def test_equals_the_step_up_definition(rng):
    # R9: Benjamini & Hochberg (1995): q_i = min over p_j >= p_i of m p_j / rank_j, capped
    # at 1, written out directly here (the engine calls statsmodels' multipletests).
    p = rng.uniform(0, 1, 200) ** 3
    m = p.size
    rank = np.argsort(np.argsort(p)) + 1
    by_definition = [min(1.0, min(m * p[j] / rank[j] for j in range(m) if p[j] >= pi)) for pi in p]
    np.testing.assert_allclose(bh_qvalues(p), by_definition, rtol=1e-12)


def test_ties_share_one_q_value():
    # Common practice: tied p-values get the same q-value whatever their order.
    q = bh_qvalues([0.02, 0.02, 0.5, 0.02])
    assert q[0] == q[1] == q[3] and np.isclose(q[0], 0.02 * 4 / 3)


def test_empty_input():
    assert bh_qvalues([]).size == 0

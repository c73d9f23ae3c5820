"""Benjamini-Hochberg q-values."""

import numpy as np
from statsmodels.stats.multitest import multipletests

from tui.engine.qvalues import bh_qvalues


def test_published_small_example():
    # Benjamini & Hochberg (1995), JRSS B 57(1); values worked by hand.
    np.testing.assert_allclose(bh_qvalues([0.01, 0.04, 0.03, 0.005]), [0.02, 0.04, 0.04, 0.02])


def test_equals_the_step_up_definition(rng):
    # Benjamini & Hochberg (1995): q_i = min over p_j >= p_i of m p_j / rank_j, capped
    # at 1, written out directly here.
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


def test_nan_p_values_stay_nan_and_the_rest_match_statsmodels_without_them(rng):
    # Reference library statsmodels multipletests(method="fdr_bh") on the p-values left
    # after removing the NaNs.
    p = rng.uniform(0, 1, 50) ** 2
    p[[3, 17, 40]] = np.nan
    q = bh_qvalues(p)
    known = ~np.isnan(p)
    assert np.isnan(q[~known]).all()
    np.testing.assert_allclose(q[known], multipletests(p[known], method="fdr_bh")[1], rtol=1e-12)


def test_rank_with_a_nan_p_value_gives_the_others_their_q_values():
    # Reference library statsmodels multipletests on the two present p-values.
    from dataclasses import replace

    from tui.engine.scan import ColumnScan, rank

    base = ColumnScan("a", 10, 10, 0, 5, 10, ())
    scans = [
        replace(base, column="a", score=9.0, df=2, p_value=0.011),
        replace(base, column="b", score=1.0, df=2, p_value=float("nan")),
        replace(base, column="c", score=3.0, df=2, p_value=0.2),
    ]
    by = {s.column: s for s in rank(scans)}
    expected = multipletests([0.011, 0.2], method="fdr_bh")[1]
    assert [by["a"].q_value, by["c"].q_value] == list(expected)
    assert np.isnan(by["b"].q_value)


def test_bit_for_bit_the_numbers_of_statsmodels(rng):
    # Reference library statsmodels multipletests(method="fdr_bh"): the engine follows its
    # steps, so the q-values are equal, not merely close (ties and p = 1 included).
    for size in (1, 2, 7, 500, 2000):
        p = rng.uniform(0, 1, size) ** 4
        p[: size // 5] = p[size // 5 : 2 * (size // 5)]  # ties
        if size > 3:
            p[-1] = 1.0
        np.testing.assert_array_equal(bh_qvalues(p), multipletests(p, method="fdr_bh")[1])

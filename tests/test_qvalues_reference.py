"""Benjamini-Hochberg q-values."""

import numpy as np
from statsmodels.stats.multitest import multipletests

from tui.engine.qvalues import bh_qvalues


def test_published_small_example():
    # Benjamini & Hochberg (1995), JRSS B 57(1); values worked by hand.
    np.testing.assert_allclose(bh_qvalues([0.01, 0.04, 0.03, 0.005]), [0.02, 0.04, 0.04, 0.02])


def test_equals_statsmodels_fdr_bh(rng):
    # Reference library statsmodels.stats.multitest.multipletests(method="fdr_bh").
    p = rng.uniform(0, 1, 200) ** 3
    np.testing.assert_allclose(bh_qvalues(p), multipletests(p, method="fdr_bh")[1], rtol=1e-12)


def test_empty_input():
    assert bh_qvalues([]).size == 0

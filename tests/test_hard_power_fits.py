"""Fractional-polynomial fits near the edge: one extreme design value is not separation."""

from __future__ import annotations

import numpy as np
import pytest
from hard_data import cauchy_tanh, reference_deviance

from tui.engine.counts import reduce_column
from tui.engine.forms import make_recoding
from tui.engine.forms.base import fit_on_counts
from tui.engine.forms.fracpoly import POWERS, Fp1Candidate
from tui.engine.forms.shift import learn_shift


def test_fp1_power_minus_half_on_cauchy_x_is_a_valid_fit():
    # Reference library statsmodels GLM Binomial (standardised column, deviance from its
    # parameters, confirmed by scipy trust-exact): power -0.5 reaches 3682.61.
    x, y = cauchy_tanh(3000, seed=1)
    counts = reduce_column(x, y)
    shift = learn_shift(counts)
    fit = fit_on_counts(make_recoding("fp1", {"power": -0.5, "shift": shift}), counts)
    z = x + shift
    assert fit.converged and not fit.separated
    assert fit.deviance == pytest.approx(reference_deviance(z**-0.5, y), abs=1e-6)
    assert fit.deviance == pytest.approx(3682.61, abs=0.01)
    assert Fp1Candidate().learn(counts).recoding.params["power"] == -0.5


@pytest.mark.parametrize("seed", [1, 2, 4, 5, 6])
def test_fp1_search_reaches_the_best_statsmodels_power(seed):
    # Reference library statsmodels (and scipy trust-exact) over the eight FP1 powers of
    # Royston & Altman (1994).
    x, y = cauchy_tanh(3000, seed=seed)
    counts = reduce_column(x, y)
    z = x + learn_shift(counts)
    best = min(reference_deviance(np.log(z) if p == 0 else z**p, y) for p in POWERS)
    chosen = Fp1Candidate().learn(counts).recoding
    assert fit_on_counts(chosen, counts).deviance == pytest.approx(best, abs=1e-6)

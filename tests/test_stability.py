"""Bootstrap selection frequencies of the candidate forms (engine/stability.py).

Method: bootstrap model-selection frequencies (Sauerbrei & Schumacher 1992, for variable
selection); the bootstrap of rows (Efron & Tibshirani 1993). A resample of rows, reduced to
counts, is a multinomial draw over the cells, so the stacked fits are checked against a
row-level statsmodels GLM on one resample's rows.
"""

from __future__ import annotations

import numpy as np
import pytest
import statsmodels.api as sm

from tui.engine.column_fits import CandidateSet, fit_column
from tui.engine.counts import reduce_column
from tui.engine.fitting import fit_logistic
from tui.engine.forms.base import design_matrix
from tui.engine.resample_fit import fit_stacked
from tui.engine.stability import percent, resampled_counts, selection_shares

WANTED = CandidateSet(4, 4)
NON_LINEAR = {"fp1", "fp2", "quadratic", "spline", "hinge", "indicator", "bands"}


def _counts(effect, n=4000, seed=3):
    rng = np.random.default_rng(seed)
    x = np.round(rng.uniform(20, 80, n), 1)
    p = 1 / (1 + np.exp(-(-1.0 + effect(x))))
    return reduce_column(x, (rng.random(n) < p).astype(float))


def _shares(counts, resamples=200, seed=11):
    table = fit_column(counts, WANTED, smooth=False).table
    return selection_shares(counts, table, WANTED.candidates(), resamples, seed)


def test_shares_sum_to_one_and_repeat_with_the_seed():
    # Efron & Tibshirani 1993: the same random draws give the same resamples.
    counts = _counts(lambda x: 0.002 * (x - 50) ** 2)
    first, again = _shares(counts, 60, seed=5), _shares(counts, 60, seed=5)
    assert sum(first.shares.values()) == pytest.approx(1.0)
    assert first.shares == again.shares
    assert first.resamples == 60 and first.seed == 5 and first.usable == 60
    other = _shares(counts, 60, seed=6)
    assert sum(other.shares.values()) == pytest.approx(1.0)


def test_a_strong_planted_bend_is_chosen_non_linear():
    # Sauerbrei & Schumacher 1992: a strong effect is selected in nearly every resample.
    counts = _counts(lambda x: 0.004 * (x - 50) ** 2)
    shares = _shares(counts)
    assert sum(shares.share(k) for k in NON_LINEAR) >= 0.90
    assert shares.share("linear") < 0.05


def test_no_effect_spreads_the_shares():
    # With no effect no form is chosen firmly: the shares spread over several forms and
    # none comes near the >= 90% of a planted bend (Sauerbrei & Schumacher 1992: low
    # selection frequencies mark a weak or absent effect). Measured here, not assumed:
    # even on 60 fresh samples without effect the lowest AIC fell on linear or log in only
    # 25, the searched indicator in 20 (its cut, one extra df, is the best of many); and
    # resampling with replacement repeats rows, which favours the searched and multi-df
    # forms further (De Bin et al. 2016 report the same of the bootstrap; from memory).
    counts = _counts(lambda x: 0.0 * x, seed=8)
    shares = _shares(counts)
    assert max(shares.shares.values()) < 0.6
    assert len(shares.shares) >= 4
    assert shares.share("linear") + shares.share("log") > 0


def test_a_resample_is_the_rows_drawn_again():
    # Efron & Tibshirani 1993: every resample has as many rows as the data.
    counts = _counts(lambda x: 0.01 * x)
    events, trials = resampled_counts(counts, 7, seed=1)
    assert np.allclose(trials.sum(axis=1), counts.rows)
    assert (events <= trials).all()


def test_stacked_fits_equal_statsmodels_on_the_resampled_rows():
    # statsmodels GLM Binomial on the resample's rows, expanded one per row.
    counts = _counts(lambda x: 0.003 * (x - 50) ** 2, n=1500)
    table = fit_column(counts, WANTED, smooth=False).table
    events, trials = resampled_counts(counts, 3, seed=2)
    for key in ("linear", "quadratic", "spline"):
        row = table.row(key)
        design = design_matrix(row.recoding, counts.x)
        stacked = fit_stacked(design, events, trials, row.fit)
        assert stacked.ok.all()
        for b in range(3):
            y = np.concatenate(
                [np.ones(int(events[b].sum())), np.zeros(int((trials[b] - events[b]).sum()))]
            )
            rows_x = np.concatenate(
                [
                    np.repeat(design, events[b].astype(int), axis=0),
                    np.repeat(design, (trials[b] - events[b]).astype(int), axis=0),
                ]
            )
            reference = sm.GLM(y, rows_x, family=sm.families.Binomial()).fit()
            assert stacked.llf[b] == pytest.approx(reference.llf, abs=1e-6)
            assert stacked.llf[b] == pytest.approx(
                fit_logistic(design, events[b], trials[b]).llf, abs=1e-6
            )


def test_adjusted_counts_are_not_resampled():
    counts = _counts(lambda x: 0.01 * x)
    table = fit_column(counts, WANTED, smooth=False).table
    from dataclasses import replace

    adjusted = replace(counts, covariates=np.zeros((counts.x.size, 1)))
    assert selection_shares(adjusted, table, WANTED.candidates(), 10, 0) is None


def test_percent_words():
    assert percent(0.78) == "78%" and percent(0.0) == "0%" and percent(0.001) == "<1%"

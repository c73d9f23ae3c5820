"""The LOWESS smoother against statsmodels on the rows themselves."""

import numpy as np
from statsmodels.nonparametric.smoothers_lowess import lowess

from tui.engine.counts import reduce_column
from tui.engine.smoother import CLIP, smoothed_log_odds


def test_equals_statsmodels_lowess_on_the_rows(rng):
    # Reference library: statsmodels.nonparametric.lowess, no robustness iterations.
    x = np.round(rng.uniform(0, 10, 3000), 1)
    y = (rng.random(3000) < 1 / (1 + np.exp(-((x - 5) ** 2) / 4 + 1))).astype(float)
    xs, log_odds = smoothed_log_odds(reduce_column(x, y))
    ref = lowess(y, x, frac=2 / 3, it=0, delta=0.01 * (x.max() - x.min()))
    ref_x, first = np.unique(ref[:, 0], return_index=True)
    ref_p = np.clip(ref[first, 1], CLIP, 1 - CLIP)
    picked = np.searchsorted(ref_x, xs)
    np.testing.assert_allclose(log_odds, np.log(ref_p / (1 - ref_p))[picked], rtol=1e-9)


def test_u_shape_shows_a_turn(rng):
    x = rng.normal(size=4000)
    y = (rng.random(4000) < 1 / (1 + np.exp(-(1.5 * x**2 - 2)))).astype(float)
    xs, log_odds = smoothed_log_odds(reduce_column(x, y))
    middle = log_odds[np.abs(xs) < 0.3].mean()
    assert log_odds[xs < -1.5].mean() > middle + 1 and log_odds[xs > 1.5].mean() > middle + 1


def test_too_few_values_give_nothing():
    xs, log_odds = smoothed_log_odds(reduce_column(np.array([0.0, 1.0] * 20), np.ones(40) * 0))
    assert xs.size == 0 and log_odds.size == 0

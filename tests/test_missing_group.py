"""The missing rows as a group, and fill against fill + indicator on every row with an
outcome (tui/engine/missing_group.py)."""

from __future__ import annotations

import numpy as np
import pytest
import statsmodels.api as sm

from tui.engine.column_fits import CandidateSet, fit_column
from tui.engine.counts import reduce_column
from tui.engine.forms import make_recoding
from tui.engine.missing_group import (
    FILL,
    FILL_INDICATOR,
    compare_fills,
    missing_group,
    training_median,
)


def planted(seed: int = 3, n: int = 4000) -> tuple[np.ndarray, np.ndarray]:
    """Invented column: risk rises with x; the 15% of rows with x missing carry a planted
    log-odds of +1.5, far above any observed x (whose log-odds run from -2.5 to -0.5)."""
    rng = np.random.default_rng(seed)
    x = rng.uniform(0.0, 10.0, n)
    gone = rng.random(n) < 0.15
    eta = np.where(gone, 1.5, -2.5 + 0.2 * x)
    y = (rng.random(n) < 1 / (1 + np.exp(-eta))).astype(float)
    x[gone] = np.nan
    x[np.flatnonzero(gone)[:3]] = np.inf  # non-finite counts as missing too
    return x, y


def test_missing_group_counts_and_logit_equal_the_formula():
    x, y = planted()
    group = missing_group(x, y)
    gone = ~np.isfinite(x)
    e, n = y[gone].sum(), gone.sum()
    assert (group.n, group.events) == (n, e)
    assert group.observed + group.n == x.size
    # Empirical logit with the 1/2 correction (Haldane 1956; Anscombe 1956), worked here.
    assert group.logit == pytest.approx(np.log((e + 0.5) / (n - e + 0.5)), abs=1e-12)
    assert group.se == pytest.approx(np.sqrt(1 / (e + 0.5) + 1 / (n - e + 0.5)), abs=1e-12)
    assert missing_group(np.array([1.0, 2.0]), np.array([0, 1])) is None


def test_planted_risk_shows_above_every_observed_group_and_the_indicator_wins():
    x, y = planted()
    group = missing_group(x, y)
    fitted = fit_column(reduce_column(x, y), CandidateSet(groups=10, knots=4))
    highest = max(g.logit for g in fitted.groups)
    # Well above: more than two standard errors clear of the highest observed group.
    assert group.logit - 2 * group.se > highest + 0.5
    comparison = compare_fills(make_recoding("linear", {}), x, y, training_median(x))
    assert comparison.best == FILL_INDICATOR
    assert comparison.delta_aic < -100
    assert comparison.fill_only.rows == comparison.with_indicator.rows == x.size
    assert comparison.with_indicator.indicator_coef > 1.0


def test_without_planted_risk_the_indicator_does_not_pay_its_df():
    # Flat risk, x missing completely at random: the fill predicts the missing rows' risk
    # as well as any value would. (With a sloped risk, the mean risk over x differs from the
    # risk at the median, so an indicator can pay a little even then.)
    rng = np.random.default_rng(11)
    x = rng.uniform(0.0, 10.0, 4000)
    y = (rng.random(4000) < 0.2).astype(float)
    x[rng.random(4000) < 0.15] = np.nan
    comparison = compare_fills(make_recoding("linear", {}), x, y, training_median(x))
    assert comparison.best == FILL
    assert comparison.delta_aic > -2  # at most chance improvement for one more number


@pytest.mark.parametrize("indicator", [False, True])
def test_fill_fits_equal_a_row_level_statsmodels_glm(indicator):
    # Reference: statsmodels GLM Binomial on every row, the fill and indicator built by hand.
    x, y = planted(seed=5, n=1500)
    recoding = make_recoding("spline", {"knots": [2.0, 5.0, 8.0]}, clip=(1.0, 9.0))
    comparison = compare_fills(recoding, x, y, 4.0)
    ours = comparison.with_indicator if indicator else comparison.fill_only
    gone = ~np.isfinite(x)
    filled = np.clip(np.where(gone, 4.0, x), 1.0, 9.0)
    t = [2.0, 5.0, 8.0]
    cube = lambda u: np.maximum(u, 0) ** 3  # noqa: E731
    rcs = (
        cube(filled - t[0])
        - cube(filled - t[1]) * (t[2] - t[0]) / (t[2] - t[1])
        + cube(filled - t[2]) * (t[1] - t[0]) / (t[2] - t[1])
    ) / (t[2] - t[0]) ** 2  # restricted cubic spline (Harrell 2015), written out here
    columns = [filled, rcs] + ([gone.astype(float)] if indicator else [])
    design = sm.add_constant(np.column_stack(columns))
    glm = sm.GLM(y, design, family=sm.families.Binomial()).fit()
    assert ours.status == "ok"
    assert ours.deviance == pytest.approx(glm.deviance, abs=1e-6)
    assert ours.aic == pytest.approx(glm.aic, abs=1e-6)
    assert ours.recoding.missing.indicator is indicator
    np.testing.assert_allclose(ours.recoding.apply(x), design[:, 1:], rtol=1e-12)


def test_a_fill_a_log_form_cannot_take_is_a_failed_row_not_an_exception():
    x, y = planted()
    comparison = compare_fills(make_recoding("log", {"shift": 0.0}), x, y, -5.0)
    assert comparison.fill_only.status == "failed"
    with pytest.raises(ValueError, match="finite"):
        compare_fills(make_recoding("linear", {}), x, y, float("nan"))
    with pytest.raises(ValueError, match="no finite values"):
        training_median(np.array([np.nan, np.inf]))

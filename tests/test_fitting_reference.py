"""The engine's logistic solver against published figures and statsmodels."""

import numpy as np
import pytest
import statsmodels.api as sm

from tui.engine.counts import reduce_column
from tui.engine.fitting import fit_logistic


def _spector():
    data = sm.datasets.spector.load_pandas().data
    X = np.column_stack([np.ones(len(data)), data[["GPA", "TUCE", "PSI"]].to_numpy()])
    return X, data["GRADE"].to_numpy(float)


def test_spector_grade_model_matches_published_estimates():
    # Spector & Mazzeo (1980); printed in Greene, Econometric Analysis 7th ed.,
    # Example 17.3, Table 17.1 (table and example number from memory).
    X, y = _spector()
    fit = fit_logistic(X, y, np.ones_like(y))
    assert fit.converged and not fit.separated
    np.testing.assert_allclose(fit.coef, [-13.021, 2.826, 0.095, 2.379], atol=6e-4)
    assert fit.llf == pytest.approx(-12.890, abs=5e-4)


def test_spector_grade_model_equals_statsmodels():
    # Reference library statsmodels: GLM Binomial on the same design.
    X, y = _spector()
    ref = sm.GLM(y, X, family=sm.families.Binomial()).fit()
    fit = fit_logistic(X, y, np.ones_like(y))
    np.testing.assert_allclose(fit.coef, ref.params, rtol=1e-7)
    assert fit.llf == pytest.approx(ref.llf, abs=1e-8)
    assert fit.aic() == pytest.approx(ref.aic, abs=1e-6)
    assert fit.bic() == pytest.approx(ref.bic_llf, abs=1e-6)
    assert fit.deviance == pytest.approx(ref.deviance, abs=1e-6)


def test_reduced_counts_give_the_row_level_fit(rng):
    # Reference library statsmodels: a fit on per-value counts equals one on the rows.
    x = rng.integers(0, 40, size=3000).astype(float)
    y = (rng.random(3000) < 1 / (1 + np.exp(-(0.1 * x - 2)))).astype(float)
    counts = reduce_column(x, y)
    assert counts.exact and counts.distinct <= 40
    design = np.column_stack([np.ones(counts.distinct), counts.x, counts.x**2])
    fit = fit_logistic(design, counts.events, counts.trials)
    rows = sm.GLM(
        y, np.column_stack([np.ones(x.size), x, x**2]), family=sm.families.Binomial()
    ).fit()
    np.testing.assert_allclose(fit.coef, rows.params, rtol=1e-6)
    assert fit.llf == pytest.approx(rows.llf, abs=1e-6)
    assert fit.aic() == pytest.approx(rows.aic, abs=1e-6)
    assert fit.bic() == pytest.approx(rows.bic_llf, abs=1e-6)


def test_huge_magnitudes_do_not_break_the_solver(rng):
    # Column scaling inside the solver keeps 1e200-sized values usable.
    x = rng.normal(size=500)
    y = (rng.random(500) < 1 / (1 + np.exp(-x))).astype(float)
    small = fit_logistic(np.column_stack([np.ones(500), x]), y, np.ones(500))
    huge = fit_logistic(np.column_stack([np.ones(500), x * 1e200]), y, np.ones(500))
    assert huge.converged
    assert huge.llf == pytest.approx(small.llf, abs=1e-8)
    assert huge.coef[1] * 1e200 == pytest.approx(small.coef[1], rel=1e-6)


def test_complete_separation_is_flagged_from_the_fit():
    # Separation in miniature: events exactly where x > 0; statsmodels may still report converged.
    x = np.linspace(-3, 3, 60)
    y = (x > 0).astype(float)
    fit = fit_logistic(np.column_stack([np.ones(60), x]), y, np.ones(60))
    assert fit.separated and not fit.ok


def test_collinear_design_is_reported():
    x = np.linspace(1, 5, 50)
    y = (np.arange(50) % 3 == 0).astype(float)
    fit = fit_logistic(np.column_stack([np.ones(50), x, 2 * x]), y, np.ones(50))
    assert fit.rank_deficient and not fit.ok


def test_long_tail_with_extreme_log_odds_is_a_fit_not_separation(rng):
    # A real slope over a long tail puts |log-odds| above 30 at the far rows; the maximum
    # exists (statsmodels converges to the same estimate), so this is no separation.
    x = np.r_[rng.lognormal(0, 1.0, 3000), [150.0, 180.0, 220.0]]
    y = (rng.random(x.size) < 1 / (1 + np.exp(-(-2 + 0.3 * x)))).astype(float)
    design = np.column_stack([np.ones(x.size), x])
    fit = fit_logistic(design, y, np.ones_like(y))
    ref = sm.GLM(y, design, family=sm.families.Binomial()).fit()
    assert np.max(np.abs(design @ fit.coef)) > 30
    assert fit.ok
    np.testing.assert_allclose(fit.coef, ref.params, rtol=1e-6)

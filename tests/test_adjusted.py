"""Adjusted checks and weights against direct statsmodels fits, and invented cases where a
bend hides or shows only in the multivariable model."""

import numpy as np
import pytest
import statsmodels.api as sm

from tui.engine.adjust import Adjustment
from tui.engine.compare import compare_forms
from tui.engine.counts import reduce_column, rows_with_covariates
from tui.engine.covariates import build_covariates
from tui.engine.forms import make_recoding
from tui.engine.forms.spline import KNOT_PERCENTILES, spline_basis
from tui.engine.scan import rank, scan_column

BINOMIAL = sm.families.Binomial()


def _glm(y, *cols, **kw):
    X = np.column_stack([np.ones(y.size), *cols])
    return sm.GLM(y, X, family=BINOMIAL, **kw).fit()


def test_adjusted_lr_and_aic_equal_statsmodels(rng):
    # Reference library statsmodels: GLM Binomial with the covariates in the design.
    n = 3000
    z1, z2 = rng.normal(size=n), rng.uniform(0, 1, n)
    x = np.exp(0.4 * z1) * rng.gamma(2.0, 1.0, n)  # positive, correlated with z1
    eta = -1 + 0.8 * z1 - z2 + np.log(x)
    y = (rng.random(n) < 1 / (1 + np.exp(-eta))).astype(float)
    Z = np.column_stack([z1, z2])
    table = compare_forms(rows_with_covariates(x, y, Z))
    lin = _glm(y, Z, x)
    assert table.linear.aic == pytest.approx(lin.aic, abs=1e-6)
    knots = np.quantile(x, KNOT_PERCENTILES[4])
    spl = _glm(y, Z, spline_basis(x, knots))
    row = table.row("spline")
    assert row.aic == pytest.approx(spl.aic, abs=1e-6)
    assert row.bic == pytest.approx(spl.bic_llf, abs=1e-6)
    assert row.lr_chi2 == pytest.approx(lin.deviance - spl.deviance, abs=1e-6)
    quad = _glm(y, Z, x, x**2)
    assert table.row("quadratic").aic == pytest.approx(quad.aic, abs=1e-6)
    result, _ = scan_column(
        "x", x, y, adjust=Adjustment(build_covariates(["z1", "z2"], {"z1": z1, "z2": z2}, {}))
    )
    assert result.score == pytest.approx(lin.deviance - spl.deviance, abs=1e-6)
    assert result.adjusted_for == ("z1", "z2")


def test_box_tidwell_for_gpa_adjusted_for_tuce_and_psi():
    # The grade data (statsmodels.datasets.spector; Spector & Mazzeo 1980), Box & Tidwell (1962),
    # computed directly with statsmodels.
    data = sm.datasets.spector.load_pandas().data
    y = data["GRADE"].to_numpy(float)
    gpa = data["GPA"].to_numpy(float)
    Z = data[["TUCE", "PSI"]].to_numpy(float)
    lin = _glm(y, Z, gpa)
    full = _glm(y, Z, gpa, gpa * np.log(gpa))
    bt = compare_forms(rows_with_covariates(gpa, y, Z)).box_tidwell
    assert bt.shift == 0.0
    assert bt.chi2 == pytest.approx(lin.deviance - full.deviance, abs=1e-6)
    assert bt.power == pytest.approx(1 + full.params[4] / lin.params[3], rel=1e-6)


def _scores(columns, y, adjust=None):
    return {r.column: r for r in rank(scan_column(c, v, y, adjust=adjust)[0]
                                      for c, v in columns.items())}  # fmt: skip


def test_bend_that_belongs_to_a_correlated_covariate_disappears_after_adjustment(rng):
    # Invented: the risk bends in "depth"; "reach" only tracks depth closely.
    n = 6000
    depth = rng.normal(size=n)
    reach = depth + rng.normal(scale=0.3, size=n)
    y = (rng.random(n) < 1 / (1 + np.exp(-(-1.5 + 0.9 * depth**2)))).astype(float)
    alone = _scores({"reach": reach}, y)["reach"]
    assert alone.q_value < 1e-6
    design = build_covariates(
        ["depth"], {"depth": depth}, {}, {"depth": make_recoding("quadratic")}
    )
    adjusted = _scores({"reach": reach}, y, Adjustment(design))["reach"]
    assert adjusted.p_value > 0.01
    assert adjusted.adjusted_for == ("depth",)


def test_bend_that_shows_only_after_adjustment(rng):
    # Invented: "load" bends, but a covariate "strain" that tracks load squared cancels it.
    n = 6000
    load = rng.normal(size=n)
    strain = load**2 + rng.normal(scale=0.5, size=n)
    eta = -1.0 + 1.5 * load**2 - 1.5 * strain
    y = (rng.random(n) < 1 / (1 + np.exp(-eta))).astype(float)
    alone = _scores({"load": load}, y)["load"]
    assert alone.p_value > 0.01
    adjusted = _scores(
        {"load": load}, y, Adjustment(build_covariates(["strain"], {"strain": strain}, {}))
    )
    assert adjusted["load"].p_value < 1e-6
    assert adjusted["load"].shape == "u-shape"


def test_column_is_never_adjusted_for_itself(rng):
    x = rng.normal(size=500)
    y = (rng.random(500) < 0.3).astype(float)
    adjust = Adjustment(build_covariates(["x"], {"x": x}, {}))
    result, _ = scan_column("x", x, y, adjust=adjust)
    assert result.adjusted_for == ()


def test_frequency_weights_equal_repeated_rows(rng):
    # Frequency weights: the fit equals the fit on the rows repeated that many times.
    n = 800
    x = rng.gamma(2.0, 2.0, n)
    y = (rng.random(n) < 1 / (1 + np.exp(-(np.log(x) - 1)))).astype(float)
    w = rng.integers(1, 4, n).astype(float)
    freq = Adjustment(weights=w, weight_column="w", weight_kind="frequency")
    weighted, wtable = scan_column("x", x, y, adjust=freq)
    repeated, rtable = scan_column("x", np.repeat(x, w.astype(int)), np.repeat(y, w.astype(int)))
    assert weighted.score == pytest.approx(repeated.score, rel=1e-9)
    for a, b in zip(wtable.rows, rtable.rows, strict=True):
        assert a.aic == pytest.approx(b.aic, rel=1e-9), a.label
    # and the same as statsmodels' freq_weights (reference library).
    ref = _glm(y, x, freq_weights=w)
    assert wtable.linear.aic == pytest.approx(ref.aic, abs=1e-6)


def test_survey_weights_match_statsmodels_var_weights(rng):
    # Survey weights rescaled to mean 1 give statsmodels' var_weights fit (reference library).
    n = 800
    x = rng.normal(size=n)
    y = (rng.random(n) < 1 / (1 + np.exp(-x))).astype(float)
    w = rng.uniform(0.2, 5.0, n)
    w = w / w.mean()
    counts = reduce_column(x, y, weights=w)
    table = compare_forms(counts)
    ref = _glm(y, x, var_weights=w)
    assert table.linear.deviance == pytest.approx(ref.deviance, abs=1e-6)
    np.testing.assert_allclose(table.linear.fit.coef, ref.params, rtol=1e-6)


def test_zero_weights_drop_rows_without_counting_them_missing(rng):
    x = rng.normal(size=1000)
    y = (rng.random(1000) < 0.3).astype(float)
    w = np.ones(1000)
    w[:300] = 0.0
    result, _ = scan_column("x", x, y, adjust=Adjustment(weights=w, weight_column="w",
                                                         weight_kind="frequency"))  # fmt: skip
    assert result.rows == 700 and result.missing == 0
    assert "many-missing" not in result.flags

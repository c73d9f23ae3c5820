"""Survey weights: the score is the Wald chi-square of the spline's non-linear terms with a
robust (sandwich, HC0) covariance (Binder 1983; White 1980).

Reference library: statsmodels GLM Binomial with ``var_weights`` and ``cov_type="HC0"``,
fitted on the rows, its ``wald_test`` of the non-linear spline coefficients.
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from scipy.special import expit

from tui.cli.scan_output import as_json, as_table
from tui.engine.adjust import Adjustment
from tui.engine.counts import reduce_column
from tui.engine.covariates import build_covariates
from tui.engine.forms.base import Recoding, fit_on_counts
from tui.engine.forms.spline import SPLINE, learn_knots, spline_basis
from tui.engine.robust_wald import robust_wald
from tui.engine.scan import scan_column
from tui.intake.weights import check_weights


def _survey_data(n: int, seed: int):
    rng = np.random.default_rng(seed)
    x = np.round(rng.gamma(3.0, 10.0, n))  # whole numbers: many ties, exact counts
    w = rng.lognormal(0.0, 0.8, n)
    y = (rng.random(n) < expit(-2.0 + 0.06 * x - 0.0007 * x**2)).astype(float)
    return rng, x, y, w


def _statsmodels_wald(design: np.ndarray, y: np.ndarray, w: np.ndarray, tested: int):
    """statsmodels' robust Wald of the last ``tested`` columns (reference library)."""
    fit = sm.GLM(y, design, family=sm.families.Binomial(), var_weights=w).fit(cov_type="HC0")
    restriction = np.zeros((tested, design.shape[1]))
    restriction[:, design.shape[1] - tested :] = np.eye(tested)
    test = fit.wald_test(restriction, scalar=True)
    return float(test.statistic), float(test.pvalue)


def test_survey_score_is_the_robust_wald_statsmodels_gives():
    _, x, y, raw = _survey_data(3000, 11)
    x[::17] = np.nan  # missing rows leave the column's own weights rescaled
    checked = check_weights(pd.Series(raw), "w", "survey")
    adjust = Adjustment(weights=checked.values, weight_column="w", weight_kind="survey")
    scan, table = scan_column("x", x, y, adjust=adjust)
    used = np.isfinite(x)
    knots = table.row("spline").recoding.params["knots"]
    design = sm.add_constant(spline_basis(x[used], knots))
    # statsmodels fed the raw weights: the sandwich does not change when weights are rescaled.
    chi2, p = _statsmodels_wald(design, y[used], raw[used], len(knots) - 2)
    assert scan.statistic == "Wald (robust)" and scan.df == len(knots) - 2 == 2
    assert scan.score == pytest.approx(chi2, rel=1e-7)
    assert scan.p_value == pytest.approx(p, rel=1e-6)
    # The table keeps its likelihood ratio, which here differs from the design-based score.
    assert table.row("spline").lr_chi2 != pytest.approx(scan.score, rel=0.05)


def test_binned_cells_give_the_sandwich_of_the_binned_design():
    # Rows whose x is replaced by their bin's mean, fitted row by row in statsmodels, give
    # the same sandwich as the bins' squared-weight sums (unit survey weights: the file
    # path bins only unweighted columns).
    rng = np.random.default_rng(12)
    n = 30000
    x = rng.normal(50.0, 10.0, n)
    y = (rng.random(n) < expit(-1.0 + 0.002 * (x - 50.0) ** 2)).astype(float)
    counts = reduce_column(x, y, squares=True)
    assert not counts.exact and counts.survey
    knots = learn_knots(counts, 4)
    recoding = Recoding(SPLINE, {"knots": knots})
    wald = robust_wald(recoding, fit_on_counts(recoding, counts), counts, 2)
    order = np.argsort(x, kind="stable")
    cell = np.searchsorted(np.cumsum(counts.trials), np.arange(n), side="right")
    binned_x = counts.x[cell]
    design = sm.add_constant(spline_basis(binned_x, knots))
    chi2, p = _statsmodels_wald(design, y[order], np.ones(n), 2)
    assert wald is not None and wald.chi2 == pytest.approx(chi2, rel=1e-7)
    assert wald.p_value == pytest.approx(p, rel=1e-6)


def test_squared_weights_per_cell_are_the_row_sums():
    # Reference: numpy sums over the rows of each distinct value.
    _, x, y, w = _survey_data(500, 13)
    counts = reduce_column(x, y, weights=w, squares=True)
    for i in (0, 7, counts.x.size - 1):
        at = x == counts.x[i]
        assert counts.events_sq[i] == pytest.approx(np.sum(w[at] ** 2 * y[at]))
        assert counts.nonevents_sq[i] == pytest.approx(np.sum(w[at] ** 2 * (1 - y[at])))
    assert reduce_column(x, y, weights=w).events_sq is None  # only when asked


def test_adjusted_survey_score_is_the_robust_wald_with_covariates():
    rng, x, y, raw = _survey_data(2500, 14)
    age = rng.normal(size=x.size)
    site = rng.choice(np.array(["a", "b", "c"], dtype=object), x.size)
    y = (rng.random(x.size) < expit(-2.0 + 0.06 * x - 0.0007 * x**2 + 0.4 * age)).astype(float)
    design = build_covariates(["age", "site"], {"age": age}, {"site": site})
    checked = check_weights(pd.Series(raw), "w", "survey")
    adjust = Adjustment(design, checked.values, "w", "survey")
    scan, table = scan_column("x", x, y, adjust=adjust)
    knots = table.row("spline").recoding.params["knots"]
    rows = np.column_stack([np.ones(x.size), design.matrix, spline_basis(x, knots)])
    chi2, p = _statsmodels_wald(rows, y, raw, len(knots) - 2)
    assert scan.adjusted_for == ("age", "site") and scan.statistic == "Wald (robust)"
    assert scan.score == pytest.approx(chi2, rel=1e-6)
    assert scan.p_value == pytest.approx(p, rel=1e-5)


def test_frequency_weights_and_no_weights_keep_the_likelihood_ratio():
    rng, x, y, raw = _survey_data(2000, 15)
    counts_w = np.ceil(raw * 2)
    frequency = Adjustment(weights=counts_w, weight_column="w", weight_kind="frequency")
    for adjust in (frequency, None):
        scan, table = scan_column("x", x, y, adjust=adjust)
        assert scan.statistic == "LR"
        assert scan.score == table.row("spline").lr_chi2


def test_few_values_under_survey_weights_say_lr_approximate():
    rng = np.random.default_rng(16)
    x = rng.choice(5, size=3000, p=[0.8, 0.08, 0.06, 0.03, 0.03]).astype(float)
    y = (rng.random(x.size) < expit(-1 + 0.3 * (x - 2) ** 2)).astype(float)
    w = rng.uniform(0.8, 1.25, x.size)  # weighted quantiles tie too: no spline knots
    adjust = Adjustment(weights=w / w.mean(), weight_column="w", weight_kind="survey")
    scan, _ = scan_column("x", x, y, adjust=adjust)
    assert scan.score_test == "values" and scan.statistic == "LR (approximate)"


def test_scan_output_names_the_statistic():
    _, x, y, raw = _survey_data(1500, 17)
    adjust = Adjustment(weights=raw / raw.mean(), weight_column="w", weight_kind="survey")
    survey, _ = scan_column("x", x, y, adjust=adjust)
    plain, _ = scan_column("x", x, y)
    (record,) = json.loads(as_json([survey]))
    assert record["statistic"] == "Wald (robust)"
    assert json.loads(as_json([plain]))[0]["statistic"] == "LR"
    table = as_table([survey])
    assert "statistic" in table.splitlines()[0] and "Wald (robust)" in table
    assert "sandwich" in table and "Binder 1983" in table
    assert "statistic" not in as_table([plain]).splitlines()[0]

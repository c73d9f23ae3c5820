"""Few-value columns: tied knots give way to one indicator per value against linear."""

from __future__ import annotations

import numpy as np
import pytest
from hard_data import reference_deviance
from scipy.special import expit
from scipy.stats import chi2

from tui.cli.scan_output import as_csv, as_json, as_table
from tui.engine.scan import rank, scan_column


def _five_values(n: int = 3000, seed: int = 3):
    rng = np.random.default_rng(seed)
    x = rng.choice(5, size=n, p=[0.7, 0.1, 0.1, 0.05, 0.05]).astype(float)
    y = (rng.random(n) < expit(-1 + 0.3 * (x - 2) ** 2)).astype(float)
    return x, y


def test_values_score_equals_statsmodels_indicator_model_against_linear():
    # Reference library statsmodels GLM Binomial: one indicator per value vs linear;
    # chi-square tail from scipy.stats.
    x, y = _five_values()
    assert np.unique(np.quantile(x, [0.05, 0.35, 0.65, 0.95])).size < 3  # knots tie
    scan, _ = scan_column("x", x, y)
    dummies = (x[:, None] == np.arange(1, 5)[None, :]).astype(float)
    expected = reference_deviance(x, y) - reference_deviance(dummies, y)
    assert scan.score_test == "values"
    assert scan.score == pytest.approx(expected, abs=1e-6)
    assert scan.df == 3  # 5 values - 2
    assert scan.p_value == pytest.approx(chi2.sf(expected, 3), rel=1e-9)
    assert scan.shape == "u-shape"


def test_values_score_with_a_value_that_has_no_events():
    # Reference library statsmodels: a value with no events has fitted probability 0 in the
    # per-value model, its log-likelihood term 0 (statsmodels' deviance on the indicators).
    x, y = _five_values(seed=4)
    y[x == 4] = 0.0
    scan, _ = scan_column("x", x, y)
    dummies = (x[:, None] == np.arange(1, 5)[None, :]).astype(float)
    expected = reference_deviance(x, y) - reference_deviance(dummies, y)
    assert scan.score == pytest.approx(expected, abs=1e-4)


def test_few_value_column_is_ranked_with_a_q_value_and_outputs_say_which_test():
    # Reference: Benjamini & Hochberg (1995) across both scored columns.
    x, y = _five_values()
    noise = np.random.default_rng(9).normal(size=x.size)
    scans = rank([scan_column("x", x, y)[0], scan_column("noise", noise, y)[0]])
    assert [s.column for s in scans] == ["x", "noise"]
    assert scans[0].q_value == pytest.approx(min(1.0, 2 * scans[0].p_value), rel=1e-12)
    assert scans[1].score_test == "spline"
    assert '"score_test": "values"' in as_json(scans)
    header, first = as_csv(scans).splitlines()[:2]
    assert "score_test" in header.split(",") and ",values," in first
    assert " values " in as_table(scans).splitlines()[2]

"""Weighted scans: rows and weights kept apart; survey weights rescaled per column."""

from __future__ import annotations

import csv
import io

import numpy as np
import pandas as pd
import pytest
from hard_data import reference_deviance
from scipy.special import expit

from tui.cli.scan_output import as_csv, as_json, as_table
from tui.engine.adjust import Adjustment
from tui.engine.forms.spline import spline_basis
from tui.engine.scan import scan_column
from tui.intake.weights import check_weights


def _data(n: int, seed: int):
    rng = np.random.default_rng(seed)
    x = rng.normal(size=n)
    y = (rng.random(n) < expit(-0.5 + 0.8 * x**2 - 0.3 * x)).astype(float)
    return rng, x, y


def test_frequency_weighted_n_and_events_count_rows_and_weights_sit_beside_them():
    # Reference: numpy sums of rows and weights; statsmodels GLM Binomial with
    # freq_weights for the score.
    rng, x, y = _data(1500, 5)
    w = rng.integers(1, 6, x.size).astype(float)
    x[rng.random(x.size) < 0.13] = np.nan
    adjust = Adjustment(weights=w, weight_column="w", weight_kind="frequency")
    scan, table = scan_column("x", x, y, adjust=adjust)
    used = np.isfinite(x)
    assert scan.n == int(used.sum()) and scan.events == int(y[used].sum())  # both rows
    assert scan.weighted_n == pytest.approx(w[used].sum())
    assert scan.weighted_events == pytest.approx((w * y)[used].sum())
    assert scan.events <= scan.n and scan.weight_kind == "frequency"
    knots = table.row("spline").recoding.params["knots"]
    basis = spline_basis(x[used], knots)
    lin = reference_deviance(x[used], y[used], w[used])
    spl = reference_deviance(basis, y[used], w[used])
    assert scan.score == pytest.approx(lin - spl, abs=1e-6)
    record = as_json([scan])
    assert '"weight_kind": "frequency"' in record and '"weighted_n"' in record
    (fields,) = list(csv.DictReader(io.StringIO(as_csv([scan]))))
    assert fields["weight_kind"] == "frequency" and float(fields["weighted_n"]) == w[used].sum()
    assert f"{scan.n} (w {w[used].sum():.1f})" in as_table([scan])


def test_survey_weights_are_rescaled_over_each_columns_own_rows():
    # Reference library statsmodels GLM Binomial with var_weights rescaled to mean 1 over
    # the rows the column uses (the rows missing are those with the larger weights).
    rng, x, y = _data(3000, 6)
    raw = rng.lognormal(0, 1, x.size)
    heavy = raw > np.quantile(raw, 0.3)
    x_missing = np.where(heavy, np.nan, x)  # 70% missing, the heavier-weighted rows
    checked = check_weights(pd.Series(raw), "w", "survey")  # mean 1 over the whole file
    adjust = Adjustment(weights=checked.values, weight_column="w", weight_kind="survey")
    scan, table = scan_column("x", x_missing, y, adjust=adjust)
    used = np.isfinite(x_missing)
    w = raw[used] / raw[used].mean()
    knots = table.row("spline").recoding.params["knots"]
    basis = spline_basis(x_missing[used], knots)
    lin = reference_deviance(x_missing[used], y[used], w, kind="var")
    spl = reference_deviance(basis, y[used], w, kind="var")
    # The table's LR (approximate under survey weights); the score itself is the robust
    # Wald (tests/test_survey_wald.py).
    assert table.row("spline").lr_chi2 == pytest.approx(lin - spl, abs=1e-6)
    assert scan.statistic == "Wald (robust)"
    assert scan.weighted_n == pytest.approx(used.sum())  # average 1 over its own rows
    assert scan.weight_kind == "survey"
    assert "average 1 over each column's rows" in as_table([scan])

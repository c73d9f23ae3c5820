"""The shared-covariate adjusted scan against statsmodels and against the row-level path.

Reference library statsmodels: GLM Binomial with the covariates in the design, and with
``freq_weights`` for frequency weights. The likelihood-ratio score must equal
deviance(linear) - deviance(spline) of those fits to 1e-6 relative.
"""

import numpy as np
import pytest
import statsmodels.api as sm

from tui.engine.adjust import Adjustment
from tui.engine.adjusted_newton import ColumnRows, covariate_block
from tui.engine.adjusted_scan import AdjustedScanner, adjusted_scan, adjusted_scores
from tui.engine.covariates import build_covariates
from tui.engine.forms.spline import KNOT_PERCENTILES, spline_basis
from tui.engine.runner import scan_columns
from tui.engine.scan import scan_column

BINOMIAL = sm.families.Binomial()


def _data(rng, n=4000):
    z1 = rng.normal(size=n)
    z2 = rng.uniform(0, 1, n)
    columns = {
        "bent": rng.normal(size=n) + 0.5 * z1,  # u-shaped risk, correlated with z1
        "skewed": rng.lognormal(0.0, 0.8, n),  # log curve
        "flat": rng.normal(size=n),  # no effect at all
        "counted": rng.poisson(3.0, n).astype(float),  # whole numbers, few values
    }
    columns["skewed"][rng.random(n) < 0.05] = np.nan  # some missing
    eta = -0.8 + 0.6 * z1 - 0.7 * z2 + 0.5 * columns["bent"] ** 2 - 0.5
    eta += 0.6 * np.log(np.nan_to_num(columns["skewed"], nan=1.0))
    y = (rng.random(n) < 1 / (1 + np.exp(-eta))).astype(float)
    z2[rng.random(n) < 0.02] = np.nan  # a covariate with missing rows too
    return columns, y, {"z1": z1, "z2": z2}


def _statsmodels_score(x, y, covariates, weights=None):
    ok = np.isfinite(x) & np.all(np.isfinite(covariates), axis=1)
    kw = {}
    if weights is not None:
        ok &= weights > 0
        kw["freq_weights"] = weights[ok]
    x, y, z = x[ok], y[ok], covariates[ok]
    ones = np.ones((x.size, 1))
    linear = sm.GLM(y, np.hstack([ones, z, x[:, None]]), family=BINOMIAL, **kw).fit(tol=1e-12)
    knots = np.quantile(np.repeat(x, weights[ok].astype(int)) if weights is not None else x,
                        KNOT_PERCENTILES[4])  # fmt: skip
    spline = sm.GLM(y, np.hstack([ones, z, spline_basis(x, knots)]), family=BINOMIAL, **kw).fit(
        tol=1e-12
    )
    return linear.deviance - spline.deviance


@pytest.mark.parametrize("weighted", [False, True])
def test_score_equals_statsmodels_with_covariates(rng, weighted):
    columns, y, cov = _data(rng)
    weights = rng.integers(0, 4, y.size).astype(float) if weighted else None
    design = build_covariates(["z1", "z2"], cov, {})
    adjust = Adjustment(design, weights, "w" if weighted else None,
                        "frequency" if weighted else None)  # fmt: skip
    scores = {s.column: s for s in adjusted_scores(columns, columns.get, y, adjust)}
    for name, x in columns.items():
        expected = _statsmodels_score(x, y, design.matrix, weights)
        assert scores[name].score == pytest.approx(expected, rel=1e-6, abs=1e-9), name
        assert scores[name].df == 2
        assert scores[name].best_form is None  # the first pass leaves the forms out
    assert scores["bent"].score > 100  # the comparison includes a strongly curved column


@pytest.mark.parametrize("weighted", [False, True])
def test_both_passes_equal_the_row_level_scan(rng, weighted):
    # The row-level path (compare_forms on every row) is the reference for every figure.
    columns, y, cov = _data(rng, 3000)
    weights = rng.integers(0, 4, y.size).astype(float) if weighted else None
    adjust = Adjustment(build_covariates(["z1", "z2"], cov, {}), weights,
                        "w" if weighted else None, "frequency" if weighted else None)  # fmt: skip
    fast = {s.column: s for s in adjusted_scan(columns, columns.get, y, adjust)}
    for name, x in columns.items():
        slow = scan_column(name, x, y, adjust=adjust)[0].as_record()
        got = fast[name].as_record()
        for key, value in slow.items():
            if isinstance(value, float):
                assert got[key] == pytest.approx(value, rel=1e-7, abs=1e-7), (name, key)
            else:
                assert got[key] == value, (name, key)


def test_a_covariate_scanned_itself_is_adjusted_for_the_others_only(rng):
    columns, y, cov = _data(rng, 2000)
    numeric = {**cov, "bent": columns["bent"]}
    adjust = Adjustment(build_covariates(["z1", "bent"], numeric, {}))
    both = dict(columns, z1=cov["z1"])
    results = {s.column: s for s in scan_columns(both, both.get, y, workers=1, adjust=adjust)}
    assert results["bent"].adjusted_for == ("z1",)
    assert results["z1"].adjusted_for == ("bent",)
    slow = scan_column("bent", columns["bent"], y, adjust=adjust)[0]
    assert results["bent"].score == pytest.approx(slow.score, rel=1e-7)


def test_worker_processes_give_the_same_rows(rng):
    columns, y, cov = _data(rng, 2000)
    adjust = Adjustment(build_covariates(["z1", "z2"], cov, {}))
    one = {s.column: s for s in scan_columns(columns, columns.get, y, workers=1, adjust=adjust)}
    two = {s.column: s for s in scan_columns(columns, columns.get, y, workers=2, adjust=adjust)}
    assert one == two


def test_hard_fits_are_handed_to_the_general_solver(rng):
    # Complete separation: the event happens exactly when x is above 1. The fast steps
    # give up and fit_logistic (which halves steps and judges separation) fits the design.
    n = 1500
    z = rng.normal(size=n)
    x = rng.uniform(0, 2, n)
    y = (x > 1.0).astype(float)
    block = covariate_block(z[:, None], y)
    fit, standard = ColumnRows.of(block, x).fit(x[:, None])
    assert standard is None  # not the fast path
    assert not fit.ok
    adjust = Adjustment(build_covariates(["z"], {"z": z}, {}))
    fast = AdjustedScanner(y, adjust).scan("x", x).as_record()
    slow = scan_column("x", x, y, adjust=adjust)[0].as_record()
    assert "separation" in fast["flags"]
    assert fast["flags"] == slow["flags"] and fast["score"] == slow["score"]


def test_second_pass_later_finishes_what_the_first_began(rng):
    columns, y, cov = _data(rng, 2000)
    adjust = Adjustment(build_covariates(["z1", "z2"], cov, {}))
    scanner = AdjustedScanner(y, adjust)
    firsts = {c: scanner.first_pass(c, x) for c, x in columns.items()}
    for name, x in columns.items():
        done = scanner.complete(name, x, firsts[name])
        assert done == AdjustedScanner(y, adjust).scan(name, x)
        assert done.score == firsts[name].scan.score  # the score is the first pass's
        assert done.best_form is not None

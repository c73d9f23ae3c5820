"""Table-driven checks on adversarial invented columns against statsmodels GLM Binomial.

Each set is small (hundreds to a few thousand rows). For every set: linear, log,
quadratic, spline and bands deviances equal statsmodels on the same design; Box-Tidwell
equals statsmodels' x ln x test; the shift follows Royston & Sauerbrei (2008); knots are
numpy quantiles of the rows at Harrell's percentiles; expected flags are raised. The
250,000-row cases are in benchmarks/binned_accuracy.py (binned against exact).
"""

from __future__ import annotations

import zlib
from collections.abc import Callable

import numpy as np
import pytest
from hard_data import reference_deviance
from scipy.special import expit

from tui.engine.adjust import Adjustment
from tui.engine.forms.shift import learn_shift
from tui.engine.forms.spline import KNOT_PERCENTILES
from tui.engine.scan import reduce_for_scan, scan_reduced

Maker = Callable[[np.random.Generator], tuple[np.ndarray, np.ndarray, np.ndarray | None]]


def _outcome(rng, eta):
    return (rng.random(eta.size) < expit(eta)).astype(float)


def ties(rng):
    x = np.round(rng.gamma(2.0, 3.0, 1500))
    return x, _outcome(rng, -1 + 0.2 * x - 0.01 * x**2), None


def heavy_tail(rng):
    x = rng.standard_t(1.5, 2000)
    return x, _outcome(rng, -0.5 + np.tanh(x)), None


def negatives(rng):
    x = rng.normal(-3, 1, 1200)
    return x, _outcome(rng, -1 + 0.5 * (x + 3) ** 2), None


def huge(rng):
    x = rng.lognormal(0, 1, 1000) * 1e100
    return x, _outcome(rng, -1 + 0.6 * np.log(x / 1e100)), None


def tiny(rng):
    x = rng.uniform(1, 5, 1000) * 1e-100
    return x, _outcome(rng, 2 - 0.4 * (x / 1e-100 - 3) ** 2), None


def rare_events(rng):
    x = rng.normal(size=4000)
    return x, _outcome(rng, -4.2 + 0.8 * x**2), None


def many_missing(rng):
    x = rng.uniform(0, 10, 3000)
    y = _outcome(rng, -1 + 0.05 * (x - 5) ** 2)
    x[rng.random(x.size) < 0.8] = np.nan
    return x, y, None


def frequency_weights(rng):
    x = rng.exponential(2.0, 1200)
    return x, _outcome(rng, -1 + np.sqrt(x)), rng.integers(1, 6, x.size).astype(float)


SETS: dict[str, tuple[Maker, set[str]]] = {
    "ties": (ties, set()),
    "heavy tail": (heavy_tail, {"nonpositive"}),
    "negatives": (negatives, {"nonpositive"}),
    "huge magnitudes": (huge, set()),
    "tiny magnitudes": (tiny, set()),
    "rare events": (rare_events, {"nonpositive"}),
    "heavy missingness": (many_missing, {"many-missing"}),
    "frequency weights": (frequency_weights, set()),
}
FORMS = ("linear", "log", "quadratic", "spline", "bands")


@pytest.fixture(params=sorted(SETS), scope="module")
def case(request):
    make, flags = SETS[request.param]
    x, y, w = make(np.random.default_rng(zlib.crc32(request.param.encode())))
    adjust = (
        None if w is None else Adjustment(weights=w, weight_column="w", weight_kind="frequency")
    )
    reduced = reduce_for_scan(x, y, adjust=adjust)
    scan, table = scan_reduced("x", reduced)
    used = np.isfinite(x)
    weights = None if w is None else w[used]
    return x[used], y[used], weights, reduced.counts, scan, table, flags


@pytest.mark.parametrize("key", FORMS)
def test_form_deviance_equals_statsmodels(case, key):
    # Reference library statsmodels GLM Binomial (freq_weights when weighted), standardised
    # columns, deviance recomputed from its parameters and confirmed by scipy trust-exact.
    x, y, w, _, _, table, _ = case
    row = table.row(key)
    assert row is not None and row.status == "ok", row
    expected = reference_deviance(row.recoding.apply(x), y, w)
    assert row.deviance == pytest.approx(expected, rel=1e-10, abs=1e-7)


def test_box_tidwell_equals_statsmodels(case):
    # Box & Tidwell (1962): x ln x added to linear on the shifted x; reference statsmodels.
    x, y, w, counts, _, table, _ = case
    bt = table.box_tidwell
    assert bt is not None
    z = x + bt.shift
    expected = reference_deviance(z, y, w) - reference_deviance(
        np.column_stack([z, z * np.log(z)]), y, w
    )
    assert bt.chi2 == pytest.approx(max(0.0, expected), rel=1e-7, abs=1e-6)


def test_shift_and_knots_follow_their_published_rules(case):
    # Royston & Sauerbrei (2008) shift (from memory): -min + smallest gap when min <= 0;
    # Harrell (2015) knots: numpy quantiles of the rows at the tabulated percentiles.
    x, _, w, counts, _, table, _ = case
    xs = np.unique(x)
    expected_shift = 0.0 if xs[0] > 0 else -xs[0] + np.diff(xs).min()
    assert learn_shift(counts) == pytest.approx(expected_shift, rel=1e-12, abs=0)
    if w is None:
        knots = np.unique(np.quantile(x, KNOT_PERCENTILES[4]))
        learned = table.row("spline").recoding.params["knots"]
        np.testing.assert_allclose(learned, knots, rtol=1e-12)


def test_flags_and_score(case):
    # Flags by their definitions (tui.engine.flags); the score is the spline row's LR.
    _, _, _, _, scan, table, flags = case
    assert flags <= set(scan.flags)
    assert "separation" not in scan.flags
    spline = table.row("spline")
    assert scan.score_test == "spline" and scan.score == pytest.approx(spline.lr_chi2)

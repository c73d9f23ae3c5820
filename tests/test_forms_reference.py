"""Candidate forms against their published definitions and reference libraries."""

import itertools

import numpy as np
import patsy
import pytest

from tui.engine.counts import reduce_column
from tui.engine.forms import KINDS, RecodingError, default_candidates, make_recoding
from tui.engine.forms.fracpoly import POWERS, Fp1Candidate, Fp2Candidate
from tui.engine.forms.shift import learn_shift
from tui.engine.forms.spline import KNOT_PERCENTILES, SplineCandidate, spline_basis

# Harrell, Regression Modeling Strategies 2nd ed. (2015), §2.4.6 (table number from memory).
HARRELL_PERCENTILES = {
    3: (0.10, 0.50, 0.90),
    4: (0.05, 0.35, 0.65, 0.95),
    5: (0.05, 0.275, 0.50, 0.725, 0.95),
    6: (0.05, 0.23, 0.41, 0.59, 0.77, 0.95),
    7: (0.025, 0.1833, 0.3417, 0.50, 0.6583, 0.8167, 0.975),
}


def _counts(x, rng):
    y = (rng.random(x.size) < 0.3).astype(float)
    return reduce_column(x, y)


def test_knot_percentiles_are_the_tabulated_ones():
    assert KNOT_PERCENTILES == HARRELL_PERCENTILES  # Harrell (2015)


@pytest.mark.parametrize("k", [3, 4, 5, 6, 7])
def test_knots_equal_numpy_quantiles_of_the_rows(k, rng):
    # Harrell (2015) knots as quantiles of the non-missing x, numpy's default method.
    x = np.round(rng.gamma(2.0, 3.0, size=2000), 1)  # ties on purpose
    x[::50] = np.nan
    learned = SplineCandidate(k).learn(_counts(x, rng))
    expected = np.unique(np.quantile(x[np.isfinite(x)], HARRELL_PERCENTILES[k]))
    np.testing.assert_allclose(learned.recoding.params["knots"], expected, rtol=0, atol=1e-12)


def test_spline_basis_matches_the_published_formula(rng):
    # Stone & Koo (1985); Devlin & Weeks (1986); Harrell (2015), written out term by term.
    t = np.array([1.0, 2.5, 4.0, 7.0, 9.0])
    x = rng.uniform(0, 10, 200)
    k = t.size
    pos = lambda v: np.maximum(v, 0.0) ** 3  # noqa: E731
    expected = [x]
    for j in range(k - 2):
        term = (
            pos(x - t[j])
            - pos(x - t[k - 2]) * (t[k - 1] - t[j]) / (t[k - 1] - t[k - 2])
            + pos(x - t[k - 1]) * (t[k - 2] - t[j]) / (t[k - 1] - t[k - 2])
        ) / (t[k - 1] - t[0]) ** 2
        expected.append(term)
    np.testing.assert_allclose(spline_basis(x, t), np.column_stack(expected), rtol=1e-12)


@pytest.mark.parametrize("k", [3, 4, 5, 7])
def test_spline_spans_the_same_space_as_patsy_natural_spline(k, rng):
    # Reference library patsy: cr() natural cubic regression spline.
    x = np.sort(rng.uniform(-2, 6, 400))
    t = np.quantile(x, HARRELL_PERCENTILES[k])
    ours = np.column_stack([np.ones(x.size), spline_basis(x, t)])
    theirs = np.asarray(
        patsy.dmatrix(
            "0 + cr(x, knots=inner, lower_bound=lo, upper_bound=hi)",
            {"x": x, "inner": t[1:-1], "lo": t[0], "hi": t[-1]},
        )
    )
    coef, *_ = np.linalg.lstsq(theirs, ours, rcond=None)
    assert np.max(np.abs(theirs @ coef - ours)) < 1e-8
    back, *_ = np.linalg.lstsq(ours, theirs, rcond=None)
    assert np.max(np.abs(ours @ back - theirs)) < 1e-8


def test_spline_is_linear_beyond_the_outer_knots():
    # Stone & Koo (1985): the restricted spline is linear in the tails.
    t = [0.0, 1.0, 2.0, 3.0]
    tail = np.linspace(3.5, 20, 30)
    basis = spline_basis(tail, t)
    for j in range(basis.shape[1]):
        second_diff = np.diff(basis[:, j], 2)
        assert np.max(np.abs(second_diff)) < 1e-9 * max(1.0, np.max(np.abs(basis[:, j])))


def test_fractional_polynomial_powers_and_model_counts():
    # Royston & Altman (1994); Royston & Sauerbrei (2008): 8 powers, 8 FP1 and 36 FP2 models.
    assert POWERS == (-2.0, -1.0, -0.5, 0.0, 0.5, 1.0, 2.0, 3.0)
    assert len(list(itertools.combinations_with_replacement(POWERS, 2))) == 36


def test_fp_df_counts_the_power_search(rng):
    # FP1 counted as 2 df, FP2 as 4 (Royston & Sauerbrei 2008).
    counts = _counts(rng.uniform(1, 5, 500), rng)
    assert Fp1Candidate().learn(counts).df == 2
    assert Fp2Candidate().learn(counts).df == 4


def test_repeated_power_gives_x_to_p_and_x_to_p_log_x():
    # Royston & Altman (1994): repeated powers p, p -> x^p and x^p ln x; p = 0 means ln.
    x = np.array([0.5, 1.0, 2.0, 4.0])
    out = make_recoding("fp2", {"powers": [2, 2], "shift": 0.0}).apply(x)
    np.testing.assert_allclose(out, np.column_stack([x**2, x**2 * np.log(x)]))
    out0 = make_recoding("fp2", {"powers": [0, 0], "shift": 0.0}).apply(x)
    np.testing.assert_allclose(out0, np.column_stack([np.log(x), np.log(x) ** 2]))
    out1 = make_recoding("fp1", {"power": 0, "shift": 0.0}).apply(x)
    np.testing.assert_allclose(out1[:, 0], np.log(x))


def test_shift_for_nonpositive_values(rng):
    # x - min(x) + delta, delta the smallest positive gap between sorted distinct values
    # (Royston & Sauerbrei 2008, from memory).
    x = np.array([-3.0, -3.0, -1.0, 0.0, 0.5, 2.0])
    shift = learn_shift(_counts(x, rng))
    assert shift == pytest.approx(3.0 + 0.5)
    assert learn_shift(_counts(np.array([0.2, 1.0, 3.0]), rng)) == 0.0


@pytest.mark.parametrize(
    "recoding, x, expected",
    [
        (make_recoding("linear", {}), [1.0, -2.0], [[1.0], [-2.0]]),
        (make_recoding("log", {"shift": 1.0}), [0.0, np.e - 1], [[0.0], [1.0]]),
        (make_recoding("quadratic", {}), [3.0], [[3.0, 9.0]]),
        (make_recoding("hinge", {"knot": 2.0}), [1.0, 5.0], [[1.0, 0.0], [5.0, 3.0]]),
        (make_recoding("indicator", {"cut": 2.0}), [1.0, 2.0, 3.0], [[1.0], [0.0], [0.0]]),
        (
            make_recoding("bands", {"edges": [1.0, 2.0]}),
            [0.5, 1.0, 1.5, 2.0, 9.0],
            [[0, 0], [1, 0], [1, 0], [0, 1], [0, 1]],
        ),
        (make_recoding("linear", {}, clip=(0.0, 1.0)), [-5.0, 0.5, 5.0], [[0.0], [0.5], [1.0]]),
        (make_recoding("log", {"shift": 0.0}), [-1.0, 0.0], [[np.nan], [np.nan]]),
    ],
)
def test_every_kind_applies_its_numbers(recoding, x, expected):
    np.testing.assert_allclose(recoding.apply(np.array(x)), np.array(expected, dtype=float))


def test_missing_x_gives_missing_outputs():
    for kind, params in [
        ("spline", {"knots": [0.0, 1.0, 2.0]}),
        ("bands", {"edges": [1.0]}),
        ("indicator", {"cut": 1.0}),
    ]:
        out = make_recoding(kind, params).apply(np.array([np.nan, 1.5]))
        assert np.all(np.isnan(out[0])) and np.all(np.isfinite(out[1]))


@pytest.mark.parametrize(
    "kind, params, where",
    [
        ("spline", {"knots": [1.0, 0.5, 2.0]}, "knots"),
        ("spline", {"knots": [1.0, 2.0]}, "knots"),
        ("log", {"shift": float("nan")}, "shift"),
        ("fp1", {"power": 4, "shift": 0.0}, "power"),
        ("bands", {"edges": []}, "edges"),
        ("hinge", {}, "knot"),
        ("linear", {"extra": 1}, "params"),
    ],
)
def test_bad_numbers_are_refused_naming_the_field(kind, params, where):
    with pytest.raises(RecodingError, match=where):
        make_recoding(kind, params).validate()


def test_every_kind_is_registered():
    assert set(KINDS) == {
        "linear", "log", "fp1", "fp2", "quadratic", "spline", "hinge", "indicator", "bands"
    }  # fmt: skip


def test_learning_then_applying_needs_only_the_numbers(rng):
    # Learn on one sample; apply a copy rebuilt from plain numbers to another.
    x = rng.lognormal(1.0, 0.6, 1500)
    counts = _counts(x, rng)
    fresh = rng.lognormal(1.0, 0.6, 300)
    for cand in default_candidates():
        learned = cand.learn(counts).recoding
        rebuilt = make_recoding(learned.kind, dict(learned.params))
        np.testing.assert_array_equal(learned.apply(fresh), rebuilt.apply(fresh))


def test_few_distinct_values_fail_softly(rng):
    counts = _counts(np.repeat([1.0, 2.0], 50), rng)
    with pytest.raises(RecodingError):
        SplineCandidate(4).learn(counts)

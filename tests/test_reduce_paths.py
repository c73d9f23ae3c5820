"""The reduction's quick paths give the counts of a plain reference on hard columns.

The reference below is written out the slow way, independently of ``counts.py``'s paths:
``np.unique`` with an inverse and ``np.bincount`` for exact counts, and a stable argsort
of every row for binned ones (the bins themselves are ``_bin_bounds``' cuts on the sorted
values). Columns: ties, few values, missing values, infinities, negative zeros, whole
numbers near 2**52, every event share from none to all. No timing here (benchmarks/).
"""

import numpy as np
import pytest

from tui.engine import counts as C
from tui.engine.counts import EXACT_BELOW_ROWS, LATTICE_SPAN, reduce_column


def _reference(x, y, max_levels=C.DEFAULT_MAX_LEVELS, exact_below=EXACT_BELOW_ROWS):
    ok = np.isfinite(x)
    x, y = x[ok], y[ok].astype(float)
    values, inverse = np.unique(x, return_inverse=True)
    if values.size <= max_levels or x.size < exact_below:
        trials = np.bincount(inverse, minlength=values.size).astype(float)
        return values, trials, np.bincount(inverse, weights=y, minlength=values.size), True
    order = np.argsort(x, kind="stable")
    xs, ys = x[order], y[order]
    bounds = C._bin_bounds(xs, max_levels)
    trials = np.add.reduceat(np.ones_like(xs), bounds)
    return np.add.reduceat(xs, bounds) / trials, trials, np.add.reduceat(ys, bounds), False


def _assert_reference(x, y, **kw):
    got = reduce_column(x, y, **kw)
    values, trials, events, exact = _reference(x, y, **kw)
    assert got.exact == exact
    np.testing.assert_array_equal(got.x, values)
    np.testing.assert_array_equal(got.trials, trials)
    np.testing.assert_array_equal(got.events, events)
    assert got.rows == np.isfinite(x).sum() and got.total_events == y[np.isfinite(x)].sum()
    return got


def _outcome(rng, n, share):
    return (rng.random(n) < share).astype(np.int8)


def _spoiled(rng, x):
    """5% missing and one of each infinity: none of them may reach the counts."""
    x = x.astype(float)
    x[rng.random(x.size) < 0.05] = np.nan
    x[:2] = [np.inf, -np.inf]
    return x


SHARES = [0.0, 0.01, 0.3, 0.5, 0.8, 1.0]

COLUMNS = {
    "continuous": lambda rng, n: rng.normal(size=n),
    "signed-ties": lambda rng, n: np.round(rng.lognormal(0.0, 1.0, n), 2) * rng.choice([-1, 1], n),
    "few": lambda rng, n: rng.choice([-0.0, 0.0, 0.25, 7.5], n),
    "skewed-ties": lambda rng, n: np.round(rng.lognormal(0.0, 1.2, n), 3),
    # Not whole numbers, so the sorted path, with long runs of ties.
    "halves": lambda rng, n: rng.integers(0, 4000, n) / 2.0 + 0.25,
}


@pytest.mark.parametrize("share", SHARES)
@pytest.mark.parametrize("n", [3, 500, 40_000])
def test_whole_numbers_are_counted_per_value_without_a_sort(rng, share, n):
    x = _spoiled(rng, rng.poisson(12, n) - 5.0)  # negative, zero and positive counts
    y = _outcome(rng, n, share)
    finite = np.isfinite(x)
    y_bool = y[finite] == 1
    # The bincount path answers (it returns None when it does not apply).
    assert C._whole_number_counts(x[finite], y_bool, 1000, EXACT_BELOW_ROWS) is not None
    _assert_reference(x, y)


def test_negative_zero_counts_with_zero(rng):
    x = rng.choice([-0.0, 0.0, 1.0, 3.0], 5000)
    y = _outcome(rng, x.size, 0.4)
    got = _assert_reference(x, y)
    assert got.distinct == 3 and got.trials[0] == np.count_nonzero(x == 0)


@pytest.mark.parametrize(
    "values",
    [
        np.arange(4) * 1.0 + 2.0**52,  # beyond 2**52 a double's whole numbers are 2 apart
        np.array([0.0, 1.0, LATTICE_SPAN + 1.0]),  # span too long for a bincount
    ],
)
def test_whole_numbers_the_bincount_cannot_hold_take_the_sorted_path(rng, values):
    x = rng.choice(values, 3000)
    y = _outcome(rng, x.size, 0.3)
    assert C._whole_number_counts(x, y == 1, 1000, EXACT_BELOW_ROWS) is None
    _assert_reference(x, y)


def test_many_whole_numbers_are_binned_like_any_column(rng):
    n = 30_000
    x = _spoiled(rng, rng.integers(0, 20_000, n))  # ~15,000 distinct values, short span
    y = _outcome(rng, n, 0.2)
    finite = np.isfinite(x)
    assert C._whole_number_counts(x[finite], y[finite] == 1, 1000, EXACT_BELOW_ROWS) is None
    got = _assert_reference(x, y)
    assert not got.exact and got.distinct_values == np.unique(x[finite]).size


@pytest.mark.parametrize("share", SHARES)
@pytest.mark.parametrize("kind", ["continuous", "signed-ties", "few"])
def test_sorted_by_class_gives_every_row_and_the_smaller_class_sorted(rng, share, kind):
    n = 20_000
    x = COLUMNS[kind](rng, n)
    event = rng.random(n) < share
    xs, xm, minority_events = C._sorted_by_class(x, event)
    np.testing.assert_array_equal(xs, np.sort(x))
    minority = event if minority_events else ~event
    assert minority.sum() <= n - minority.sum()
    np.testing.assert_array_equal(xm, np.sort(x[minority]))


@pytest.mark.parametrize("share", [0.0, 0.02, 0.3, 0.7, 0.98, 1.0])
@pytest.mark.parametrize("kind", ["continuous", "skewed-ties", "halves"])
def test_binned_counts_equal_the_row_order_reference(rng, share, kind):
    n = 30_000
    x = COLUMNS[kind](rng, n)
    x = _spoiled(rng, x)
    y = _outcome(rng, n, share)
    got = _assert_reference(x, y)
    assert not got.exact
    finite = x[np.isfinite(x)]
    np.testing.assert_array_equal(got.grid, np.quantile(finite, np.linspace(0, 1, 2001)))
    assert got.distinct_values == np.unique(finite).size
    assert (got.low, got.high) == (finite.min(), finite.max())


@pytest.mark.parametrize("share", [0.05, 0.35, 0.8])
def test_exact_below_the_row_threshold_on_every_path(rng, share):
    n = EXACT_BELOW_ROWS - 1
    for x in (rng.normal(size=n), rng.integers(0, 5000, n) * 1.0, np.round(rng.normal(size=n), 1)):
        _assert_reference(_spoiled(rng, x), _outcome(rng, n, share))


@pytest.mark.parametrize("share", SHARES)
def test_few_values_that_are_not_whole_numbers(rng, share):
    x = _spoiled(rng, rng.choice([-1.5, 0.0, 0.25, 2.75, 1e9 + 0.5], 60_000))
    got = _assert_reference(x, _outcome(rng, x.size, share))
    assert got.exact and got.distinct == 5


def test_weights_of_one_give_the_unweighted_counts(rng):
    # The weighted path (one stable argsort) against the quick unweighted ones; weighted
    # columns are never binned, so the continuous one stays below the binning threshold.
    for x in (rng.poisson(4, 20_000) * 1.0, rng.normal(size=EXACT_BELOW_ROWS - 1)):
        x = _spoiled(rng, x)
        y = _outcome(rng, x.size, 0.4)
        plain = reduce_column(x, y)
        weighted = reduce_column(x, y, weights=np.ones(x.size))
        np.testing.assert_array_equal(plain.trials, weighted.trials)
        np.testing.assert_array_equal(plain.events, weighted.events)
        np.testing.assert_allclose(plain.x, weighted.x, rtol=1e-12)

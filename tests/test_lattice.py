"""Long columns reduced on the lattice (``tui.engine.lattice``) against numpy's exact answers.

References: ``numpy.unique`` (distinct values and their counts), ``numpy.quantile`` (the
type-7 quantiles), and the same scan fitted on every distinct value (exact counts; the fits
themselves are held to statsmodels in test_fitting_reference.py). Invented columns, fixed
seeds; 300,000 rows, above ``LATTICE_ROWS``. No timing here (benchmarks/).
"""

import numpy as np
import pytest

from tui.engine import counts as C
from tui.engine import lattice as L
from tui.engine.counts import reduce_column
from tui.engine.scan import ScanSettings, scan_counts

N = 300_000
assert N >= L.LATTICE_ROWS


def _columns() -> dict[str, np.ndarray]:
    rng = np.random.default_rng(20261203)
    return {
        "skewed": rng.lognormal(1.0, 0.8, N),
        "bell": rng.normal(80.0, 10.0, N),
        "two decimals": np.round(rng.normal(100.0, 20.0, N), 2),
        "heap of ones": np.where(rng.random(N) < 0.3, 1.0, 0.01 + rng.gamma(2.0, 3.0, N)),
    }


def _events(x: np.ndarray, seed: int = 7) -> np.ndarray:
    rng = np.random.default_rng(seed)
    z = (x - np.median(x)) / x.std()
    return rng.random(x.size) < 1.0 / (1.0 + np.exp(-(0.5 * z - 0.4 * z * z)))


@pytest.mark.parametrize("name", list(_columns()))
def test_bins_keep_every_row_and_event_and_never_split_a_value(name):
    x = _columns()[name]
    y = _events(x)
    got = reduce_column(x, y)
    assert not got.exact and got.grid is not None and got.values_estimated
    values, inverse, per_value = np.unique(x, return_inverse=True, return_counts=True)
    events_per_value = np.bincount(inverse, weights=y, minlength=values.size)
    assert got.rows == N and got.total_events == y.sum()
    assert got.distinct <= C.DEFAULT_MAX_LEVELS + 2 * (C.TAIL_ROWS + 1)
    assert np.all(np.diff(got.x) > 0)
    # Each bin ends where a run of tied values ends: its cumulative rows are a
    # cumulative count of the distinct values, and its events and mean are theirs.
    cum_values = np.cumsum(per_value)
    ends = np.searchsorted(cum_values, np.cumsum(got.trials))
    np.testing.assert_array_equal(cum_values[ends], np.cumsum(got.trials))
    starts = np.r_[0, ends[:-1] + 1]
    np.testing.assert_allclose(
        np.add.reduceat(events_per_value, starts), got.events, rtol=0, atol=1e-9
    )
    means = np.add.reduceat(values * per_value, starts) / got.trials
    np.testing.assert_allclose(got.x, means, rtol=1e-9)


@pytest.mark.parametrize("name", list(_columns()))
def test_lowest_and_highest_rows_keep_their_own_values(name):
    x = _columns()[name]
    got = reduce_column(x, _events(x))
    values, per_value = np.unique(x, return_counts=True)
    low_end = int(np.searchsorted(np.cumsum(per_value), C.TAIL_ROWS, side="right")) + 1
    np.testing.assert_array_equal(got.x[:low_end], values[:low_end])
    np.testing.assert_array_equal(got.trials[:low_end], per_value[:low_end])
    high_end = int(np.searchsorted(np.cumsum(per_value[::-1]), C.TAIL_ROWS - 1, side="right"))
    np.testing.assert_array_equal(got.x[-high_end:], values[-high_end:])
    assert got.minimum == x.min() and got.maximum == x.max()


@pytest.mark.parametrize("name", list(_columns()))
def test_quantile_grid_is_within_one_cell_of_numpy(name):
    x = _columns()[name]
    got = reduce_column(x, _events(x))
    probs = np.linspace(0.0, 1.0, 2001)
    width = (x.max() - x.min()) / L.CELLS
    error = np.abs(got.quantile(probs) - np.quantile(x, probs))
    assert error.max() <= width * (1 + 1e-9)
    assert got.quantile(0.0)[0] == x.min() and got.quantile(1.0)[0] == x.max()


def test_a_heap_of_ties_keeps_its_exact_value_in_the_quantiles():
    x = _columns()["heap of ones"]
    got = reduce_column(x, _events(x))
    below, heap = np.mean(x < 1.0), np.mean(x == 1.0)
    inside = np.linspace(below + 0.01, below + heap - 0.01, 5)
    np.testing.assert_array_equal(got.quantile(inside), 1.0)
    at = np.flatnonzero(got.x == 1.0)
    assert at.size == 1 and got.trials[at[0]] == np.count_nonzero(x == 1.0)


def test_columns_reaching_zero_are_sorted_for_their_exact_smallest_gap():
    rng = np.random.default_rng(13)
    for x in (rng.normal(0.0, 1.0, N), np.where(rng.random(N) < 0.3, 0.0, rng.gamma(2.0, 3.0, N))):
        got = reduce_column(x, _events(x))
        values = np.unique(x)
        assert not got.values_estimated and got.distinct_values == values.size
        assert got.smallest_gap == np.diff(values).min()


@pytest.mark.parametrize("name", list(_columns()))
def test_distinct_count_estimate_is_within_half_a_percent(name):
    x = _columns()[name]
    got = reduce_column(x, _events(x))
    assert got.distinct_values == pytest.approx(np.unique(x).size, rel=0.005)


def test_whole_numbers_with_narrow_cells_are_counted_exactly():
    rng = np.random.default_rng(11)
    x = rng.integers(1, 200_001, N).astype(float)  # span above LATTICE_SPAN, below CELLS
    assert C.LATTICE_SPAN < 200_000 < L.CELLS
    got = reduce_column(x, _events(x))
    assert not got.values_estimated
    assert got.distinct_values == np.unique(x).size
    np.testing.assert_array_equal(
        got.quantile([0.25, 0.5, 0.75]), np.quantile(x, [0.25, 0.5, 0.75])
    )


def test_very_long_tails_are_sorted_instead():
    x = np.random.default_rng(5).pareto(1.0, N)
    y = _events(np.log1p(x))
    assert L.lattice_counts(x, y, C.DEFAULT_MAX_LEVELS, C.TAIL_ROWS, 2001) is None
    got = reduce_column(x, y)
    assert not got.values_estimated and got.distinct_values == np.unique(x).size
    np.testing.assert_array_equal(got.quantile([0.5]), np.quantile(x, [0.5]))


def test_few_values_on_many_rows_stay_exact():
    x = np.round(np.random.default_rng(9).normal(0, 1, N), 1)  # about 100 values
    got = reduce_column(x, _events(x))
    values, per_value = np.unique(x, return_counts=True)
    assert got.exact
    np.testing.assert_array_equal(got.x, values)
    np.testing.assert_array_equal(got.trials, per_value)


@pytest.mark.parametrize("name", list(_columns()))
def test_score_on_the_lattice_is_close_to_the_score_on_every_value(name):
    x = _columns()[name]
    y = _events(x)
    exact = reduce_column(x, y, max_levels=N)
    assert exact.exact
    settings = ScanSettings()
    on_lattice = scan_counts(name, reduce_column(x, y), N, 0, False, settings, forms=False)[0]
    on_values = scan_counts(name, exact, N, 0, False, settings, forms=False)[0]
    assert on_lattice.score == pytest.approx(on_values.score, rel=0.02, abs=0.5)

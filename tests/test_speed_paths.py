"""The fast paths of a scan give the figures of the plain ones.

Exact reduction below 50,000 rows equals statsmodels on the rows; binned reduction stays
close to it; the sort-based reduction equals the row-order one; a parallel scan equals a
sequential one; a Parquet or Feather file read one column at a time scans as when read
whole. No timing here: that belongs to benchmarks/scan_speed.py.
"""

import threading

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm

from tui.engine.counts import (
    EXACT_BELOW_ROWS,
    _reduce_general,
    reduce_column,
    sorted_quantile,
)
from tui.engine.fitting import fit_logistic, one_blas_thread
from tui.engine.forms.spline import KNOT_PERCENTILES, spline_basis
from tui.engine.runner import scan_columns
from tui.engine.scan import rank, scan_column
from tui.intake.dataset import ColumnarDataset, Dataset, open_dataset, open_whole
from tui.problems import InputProblem


def _curved(rng, n):
    x = rng.lognormal(1.0, 0.6, n)
    eta = -1.0 + 0.8 * np.log(x) - 0.15 * (np.log(x) - 1.0) ** 2 * 4
    y = (rng.random(n) < 1 / (1 + np.exp(-eta))).astype(np.int8)
    return x, y


def _statsmodels_score(x, y):
    # Reference library statsmodels: GLM Binomial on every row.
    ones = np.ones(x.size)
    knots = np.unique(np.quantile(x, KNOT_PERCENTILES[4]))
    family = sm.families.Binomial()
    lin = sm.GLM(y.astype(float), np.column_stack([ones, x]), family=family).fit()
    spl = sm.GLM(y.astype(float), np.column_stack([ones, spline_basis(x, knots)]), family=family)
    return lin.deviance - spl.fit().deviance


def test_small_data_is_exact_and_equals_statsmodels(rng):
    x, y = _curved(rng, 8000)  # 8,000 distinct values: more than the bin bound
    counts = reduce_column(x, y)
    assert counts.exact and counts.distinct == 8000
    result, _ = scan_column("x", x, y)
    assert result.exact
    assert result.score == pytest.approx(_statsmodels_score(x, y), abs=1e-6)


def test_exact_below_the_row_threshold_and_binned_from_it(rng):
    x = rng.normal(size=EXACT_BELOW_ROWS)
    y = (rng.random(x.size) < 0.3).astype(np.int8)
    assert reduce_column(x[:-1], y[:-1]).exact
    binned = reduce_column(x, y)
    assert not binned.exact and binned.distinct <= 1000
    assert binned.rows == x.size and binned.total_events == y.sum()


@pytest.mark.parametrize("tail", ["moderate", "long"])
def test_binned_score_is_close_to_every_row(rng, tail):
    x, y = _curved(rng, 120_000)
    if tail == "long":  # a long right tail whose rows still carry the curve
        x = np.exp(1.5 * np.log(x))
    result, _ = scan_column("x", x, y)
    assert not result.exact
    naive = _statsmodels_score(x, y)
    assert naive > 50  # a clearly curved column, so the comparison means something
    # The accuracy target of the binned path: within 2% relative or 0.5 absolute.
    assert abs(result.score - naive) <= max(0.02 * naive, 0.5)
    # Bins cut at equal steps as well as at quantiles do far better (0.02% here); bins
    # at quantiles alone miss by 0.2 to 0.3% on these two columns.
    assert abs(result.score - naive) <= 1e-3 * naive


def test_bins_are_neither_crowded_nor_wide_and_never_split_ties(rng):
    n, bins = 80_000, 1000
    x = np.round(rng.lognormal(0.0, 1.0, n), 3)  # skewed, with ties
    y = (rng.random(n) < 0.3).astype(np.int8)
    counts = reduce_column(x, y, max_levels=bins)
    assert not counts.exact and counts.distinct <= bins
    xs = np.sort(x)
    ends = np.cumsum(counts.trials).astype(int)
    starts = np.r_[0, ends[:-1]]
    low, high = xs[starts], xs[ends - 1]
    assert np.all(high[:-1] < low[1:])  # a value never sits in two bins
    spans = list(zip(starts, ends, strict=True))
    np.testing.assert_allclose(counts.x, [xs[a:b].mean() for a, b in spans])
    width = (xs[-1] - xs[0]) / (bins - bins // 2)
    assert np.all(high - low < width)  # equal steps cap the width of the tail's bins
    longest_tie = np.max(np.unique(x, return_counts=True)[1])
    assert counts.trials.max() <= n / (bins // 2) + longest_tie  # quantile cuts cap counts
    ys = y[np.argsort(x, kind="stable")]
    np.testing.assert_array_equal(counts.events, [ys[a:b].sum() for a, b in spans])


def test_binned_knots_are_the_quantiles_of_every_row(rng):
    x, y = _curved(rng, 60_000)
    counts = reduce_column(x, y)
    for k in (3, 4, 5, 6):
        probs = KNOT_PERCENTILES[k]
        np.testing.assert_allclose(counts.quantile(probs), np.quantile(x, probs), rtol=1e-12)


def test_sorted_quantile_is_numpy_quantile(rng):
    xs = np.sort(rng.normal(size=4001))
    probs = np.r_[np.linspace(0, 1, 2001), 0.1833, 0.6583, 0.999999]
    np.testing.assert_array_equal(sorted_quantile(xs, probs), np.quantile(xs, probs))


def _columns_for_reduction(rng, n):
    ties = rng.integers(0, 1500, n).astype(float)
    ties[rng.random(n) < 0.3] = 2000.0  # one long run of ties at the top
    low = rng.integers(0, 1500, n).astype(float)
    low[rng.random(n) < 0.3] = -1.0  # and at the bottom
    holes = rng.normal(size=n)
    holes[rng.random(n) < 0.05] = np.nan
    holes[:3] = [np.inf, -np.inf, 0.0]
    return {
        "continuous": rng.normal(size=n),
        "few": rng.integers(0, 12, n).astype(float),
        "ties": ties,
        "low": low,
        "holes": holes,
        "rounded": np.round(rng.lognormal(size=n), 2),
    }


@pytest.mark.parametrize("n", [3000, 70_000])
def test_sort_based_reduction_equals_row_order_reduction(rng, n):
    y = (rng.random(n) < 0.35).astype(np.int8)
    for name, x in _columns_for_reduction(rng, n).items():
        fast = reduce_column(x, y)
        plain = _reduce_general(x, y.astype(float), np.isfinite(x), None, 1000, EXACT_BELOW_ROWS)
        assert fast.exact == plain.exact, name
        for field in ("x", "trials", "events"):
            np.testing.assert_array_equal(getattr(fast, field), getattr(plain, field), name)
        if not fast.exact:
            np.testing.assert_array_equal(fast.grid, plain.grid, name)
        finite = x[np.isfinite(x)]
        assert fast.distinct_values == np.unique(finite).size, name
        assert fast.minimum == finite.min() and fast.maximum == finite.max(), name
    # A boolean outcome reduces like its 0/1 coding.
    x = rng.normal(size=n)
    a, b = reduce_column(x, y), reduce_column(x, y.astype(bool))
    np.testing.assert_array_equal(a.events, b.events)


def test_binned_scan_reports_the_column_not_the_bins(rng):
    n = 60_000
    ids = rng.permutation(n).astype(float) + 1.0  # a row number in disguise
    y = (rng.random(n) < 0.3).astype(np.int8)
    result, _ = scan_column("record_no", ids, y)
    assert not result.exact
    assert result.distinct == n
    assert (result.minimum, result.maximum) == (1.0, float(n))
    assert "identifier-like" in result.flags


def test_fewer_rows_than_columns_is_rank_deficient_not_an_error():
    design = np.array([[1.0, 0.0, 0.0], [1.0, 1.0, 1.0]])
    fit = fit_logistic(design, np.array([1.0, 2.0]), np.array([4.0, 4.0]))
    assert fit.rank_deficient and not fit.ok
    with pytest.raises(ValueError, match="no rows"):
        fit_logistic(np.zeros((0, 2)), np.zeros(0), np.zeros(0))


def test_one_blas_thread_limits_and_restores():
    threadpoolctl = pytest.importorskip("threadpoolctl")

    def blas_threads():
        return [
            i["num_threads"] for i in threadpoolctl.threadpool_info() if i["user_api"] == "blas"
        ]

    before = blas_threads()
    with one_blas_thread():
        assert all(n == 1 for n in blas_threads())
    assert blas_threads() == before


def _scan_table(rng, n=60_000):
    x, y = _curved(rng, n)
    columns = {
        "curved": x,
        "flat": rng.normal(size=n),
        "count": rng.poisson(3.0, n).astype(float),
        "holes": np.where(rng.random(n) < 0.05, np.nan, rng.gamma(2.0, 3.0, n)),
        "constant": np.full(n, 7.0),
        "small_exact": np.round(rng.uniform(0, 40, n), 1),
    }
    return columns, y


def _by_column(results):
    return {r.column: r for r in results}


def test_parallel_scans_equal_the_sequential_scan(rng):
    columns, y = _scan_table(rng)
    names = list(columns)
    sequential = list(scan_columns(names, columns.__getitem__, y, workers=1))
    assert [r.column for r in sequential] == names  # one process keeps the given order
    for pool in ("process", "thread"):
        parallel = list(scan_columns(names, columns.__getitem__, y, workers=2, pool=pool))
        assert _by_column(parallel) == _by_column(sequential), pool
    assert rank(parallel) == rank(sequential)


def test_scan_from_a_worker_thread_uses_a_fork_server_and_agrees(rng):
    # The review app scans from a thread: forking then is unsafe, so workers come from a
    # fork server and receive reduced counts instead of reading columns themselves.
    columns, y = _scan_table(rng, 8000)
    names = list(columns)
    found: list = []
    worker = threading.Thread(
        target=lambda: found.extend(scan_columns(names, columns.__getitem__, y, workers=2))
    )
    worker.start()
    worker.join(timeout=120)
    assert not worker.is_alive()
    sequential = scan_columns(names, columns.__getitem__, y, workers=1)
    assert _by_column(found) == _by_column(sequential)


def test_a_reading_error_in_a_worker_reaches_the_caller(rng):
    columns, y = _scan_table(rng, 5000)

    def values_of(name):
        if name == "count":
            raise InputProblem("cannot read column 'count'")
        return columns[name]

    with pytest.raises(InputProblem, match="cannot read column 'count'"):
        list(scan_columns(list(columns), values_of, y, workers=2))


def test_closing_a_scan_early_cancels_the_rest(rng):
    columns, y = _scan_table(rng, 5000)
    names = list(columns) * 4
    scan = scan_columns(names, columns.__getitem__, y, workers=2)
    first = next(scan)
    scan.close()
    assert first.column in columns
    # The pool is gone and a new scan starts cleanly.
    assert len(list(scan_columns(names[:2], columns.__getitem__, y, workers=2))) == 2


def _mixed_frame(rng, n=3000):
    x, y = _curved(rng, n)
    outcome = y.astype(float)
    outcome[rng.random(n) < 0.05] = np.nan  # rows without an outcome are dropped
    counts = pd.array(rng.poisson(4.0, n), dtype="Int64")
    counts[rng.random(n) < 0.1] = pd.NA
    return pd.DataFrame(
        {
            "site": rng.choice(["north", "south"], n),
            "pressure": x,
            "died": outcome,
            "cycles": counts,
            "sealed": rng.random(n) < 0.4,
            "serial": np.arange(n, dtype=float),
            "note": np.where(rng.random(n) < 0.5, "", "checked"),
        }
    )


@pytest.mark.parametrize("ext", ["parquet", "feather"])
def test_column_at_a_time_scans_as_the_whole_file(rng, tmp_path, ext):
    frame = _mixed_frame(rng)
    path = tmp_path / f"pumps.{ext}"
    getattr(frame, f"to_{ext}")(path)
    lazy = open_dataset(path, "died", exclude=["serial"])
    whole = open_whole(path, "died", exclude=["serial"])
    assert isinstance(lazy, ColumnarDataset) and isinstance(whole, Dataset)
    assert lazy.columns == whole.columns == ["pressure", "cycles", "sealed"]
    assert lazy.skipped == whole.skipped
    assert lazy.numeric == whole.numeric
    assert lazy.rows == whole.rows == int(np.isfinite(frame["died"]).sum())
    assert lazy.column_names == whole.column_names
    for name in lazy.columns:
        np.testing.assert_array_equal(lazy.raw_values(name), whole.raw_values(name))
        np.testing.assert_array_equal(lazy.values(name), whole.values(name))
    pd.testing.assert_frame_equal(lazy.frame, whole.frame)
    a = rank(scan_columns(lazy.columns, lazy.raw_values, lazy.outcome.y, workers=2))
    b = rank(scan_columns(whole.columns, whole.raw_values, whole.outcome.y, workers=1))
    assert a == b


@pytest.mark.parametrize(
    ("outcome", "exclude"),
    [("dead", ()), ("died", ("serial", "nowhere")), ("site", ())],
)
def test_column_at_a_time_refuses_what_the_whole_read_refuses(rng, tmp_path, outcome, exclude):
    path = tmp_path / "pumps.parquet"
    _mixed_frame(rng, 200).to_parquet(path)
    with pytest.raises(InputProblem) as whole:
        open_whole(path, outcome, exclude=exclude)
    with pytest.raises(InputProblem) as lazy:
        open_dataset(path, outcome, exclude=exclude)
    assert str(lazy.value) == str(whole.value)


def test_other_formats_are_still_read_whole(rng, tmp_path):
    path = tmp_path / "pumps.csv"
    _mixed_frame(rng, 300).to_csv(path, index=False)
    assert isinstance(open_dataset(path, "died"), Dataset)

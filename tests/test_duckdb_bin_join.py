"""DuckDB's bin counts by an ASOF join (``bin_join.py``) against numpy: the bin of each
finite value is numpy.searchsorted(edges, x, side="right") and the counts per bin are
numpy.bincount of those numbers, on a column with ties, missing values and infinities."""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager

import numpy as np
import pandas as pd
import pytest

from tui.engine.pushed import bin_plan
from tui.intake.sources import bin_join, bins
from tui.intake.sources.duckdb_source import DuckDBSource, open_file_through_duckdb


def _tied_frame(rows: int = 20_000, seed: int = 5, values: int = 3_000) -> pd.DataFrame:
    """About 3,000 values each repeated several times, some missing and some infinite;
    invented data."""
    rng = np.random.default_rng(seed)
    x = rng.integers(0, values, rows) / 7.0
    x[rng.choice(rows, 300, replace=False)] = np.nan
    x[rng.choice(rows, 20, replace=False)] = np.inf
    x[rng.choice(rows, 10, replace=False)] = -np.inf
    y = (rng.random(rows) < 1 / (1 + np.exp(-(x / 200.0 - 1.0)))).astype(np.int64)
    return pd.DataFrame({"y": y, "x": x})


def _numpy_counts(frame: pd.DataFrame, cut: bins.Cuts) -> tuple[np.ndarray, ...]:
    """(x, rows, events) per bin as the file scan lays them out: a tail value is its own
    bin with its own x, a middle bin's x is the mean of its values."""
    x = frame["x"].to_numpy(dtype=float)
    y = frame["y"].to_numpy()
    keep = np.isfinite(x)
    x, y = x[keep], y[keep]
    tail = (x < cut.low_tail) | (x >= cut.high_tail)
    mid, ymid = x[~tail], y[~tail]
    k = np.searchsorted(cut.edges, mid, side="right")
    size = cut.edges.size + 1
    rows = np.bincount(k, minlength=size)
    events = np.bincount(k, weights=ymid, minlength=size)
    sums = np.bincount(k, weights=mid, minlength=size)
    used = rows > 0
    values, inverse = np.unique(x[tail], return_inverse=True)
    tail_rows = np.bincount(inverse, minlength=values.size)
    tail_events = np.bincount(inverse, weights=y[tail], minlength=values.size)
    xs = np.r_[sums[used] / rows[used], values]
    order = np.argsort(xs, kind="stable")
    return (
        xs[order],
        np.r_[rows[used], tail_rows][order].astype(float),
        np.r_[events[used], tail_events][order],
    )


def _numpy_cuts(frame: pd.DataFrame) -> tuple[np.ndarray, bins.Cuts]:
    """The sorted finite values and the cuts a file scan makes from them."""
    finite = np.sort(frame["x"].to_numpy()[np.isfinite(frame["x"].to_numpy())])
    plan = bin_plan()
    order = finite[bins.positions(finite.size, plan)]
    return finite, bins.cuts(finite.size, plan, order, finite[0], finite[-1])


@contextmanager
def _opened(tmp_path, frame: pd.DataFrame) -> Iterator[tuple[DuckDBSource, str]]:
    """The frame as a Parquet file read through DuckDB, outcome y coded, and the base
    statement that gives column x as c0__."""
    path = tmp_path / "x.parquet"
    frame.to_parquet(path)
    source = open_file_through_duckdb(str(path))
    try:
        reduction = source._reduction
        reduction.code("y", None)
        yield source, reduction._base([reduction.columns["x"]])
    finally:
        source.close()


@pytest.mark.parametrize(
    ("rows", "values", "grouped"), [(20_000, 3_000, False), (150_000, 1_400, True)]
)
def test_asof_bin_counts_equal_numpy_searchsorted_and_bincount(tmp_path, rows, values, grouped):
    frame = _tied_frame(rows, values=values)
    finite, cut = _numpy_cuts(frame)
    # Few values for the rows: the values are counted first, then joined.
    assert (np.unique(finite).size * bin_join.GROUPED_SHARE <= finite.size) is grouped
    with _opened(tmp_path, frame) as (source, _):
        assert source.dialect.asof_bins  # the path under test
        pushed, _ = source.reduce(source.code_outcome("y", None), ["x"], bin_plan())
    (column,) = pushed
    assert not column.exact
    assert cut.edges.size > 100  # many bins, each holding several tied values
    x, rows, events = _numpy_counts(frame, cut)
    np.testing.assert_array_equal(column.trials, rows)
    np.testing.assert_array_equal(column.events, events)
    np.testing.assert_allclose(column.x, x, rtol=1e-12, atol=0)
    assert column.nonfinite == 30 and column.present == finite.size


def test_asof_and_case_tree_statements_give_the_same_rows(tmp_path):
    frame = _tied_frame(seed=9)
    _, cut = _numpy_cuts(frame)
    with _opened(tmp_path, frame) as (source, base):
        sql = bin_join.bin_counts_query(
            base, "c0__", cut.low_tail, cut.high_tail, cut.edges, source.dialect
        )
        joined = source._reduction.run(sql)
        sql = bin_join.bin_counts_query(
            base, "c0__", cut.low_tail, cut.high_tail, cut.edges, source.dialect, grouped=True
        )
        grouped = source._reduction.run(sql)
        tree = source._reduction.run(source._reduction._bucket_query(base, [0], {0: cut}))
    tree = [r for r in tree if r[0] is not None]  # the tree's query keeps the missing group
    assert sorted(r[:4] for r in joined) == sorted(r[:4] for r in tree)
    assert sorted(r[:4] for r in grouped) == sorted(r[:4] for r in tree)
    assert len(joined) > 100


def test_no_bin_starts_puts_every_middle_row_in_bin_zero(tmp_path):
    frame = pd.DataFrame({"y": [0, 1, 1, 0, 1], "x": [1.0, 2.0, np.nan, 3.0, 9.0]})
    with _opened(tmp_path, frame) as (source, base):
        sql = bin_join.bin_counts_query(base, "c0__", 2.0, 9.0, np.zeros(0), source.dialect)
        rows = sorted(source._reduction.run(sql), key=lambda r: (r[0], r[1] or 0))
    # 1.0 below the low tail and 9.0 at the high tail keep their values; 2.0 and 3.0 share 0.
    assert [tuple(r[:4]) for r in rows] == [(-1, 1.0, 1, 0), (-1, 9.0, 1, 1), (0, None, 2, 1)]

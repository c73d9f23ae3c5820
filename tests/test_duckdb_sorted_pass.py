"""DuckDB's one-sort reduction of binned columns (``sorted_pass.py``) and the paths around
it: figures checked against numpy on the same values (numpy.quantile, sorted positions,
numpy.diff, numpy.unique), and scans against the file scan of the same rows."""

from __future__ import annotations

import numpy as np
import pandas as pd
from source_cases import assert_same_scan, binned_frame, scan_json

from tui.engine.pushed import bin_plan
from tui.intake.sources import bins, duckdb_source
from tui.intake.sources.duckdb_source import DuckDBDialect, open_file_through_duckdb
from tui.intake.sources.sorted_pass import needed_positions, sorted_stats


def test_sorted_pass_equals_numpy_on_the_same_values(tmp_path):
    frame = binned_frame()
    path = tmp_path / "b.parquet"
    frame.to_parquet(path)
    source = open_file_through_duckdb(str(path))
    try:
        reduction = source._reduction
        reduction.code("y", None)
        numeric = [reduction.columns[n] for n in ("curved", "skewed", "tied")]
        base = reduction._base(numeric)
        plan = bin_plan()
        for i, name in enumerate(("curved", "skewed", "tied")):
            xs = np.sort(frame[name].to_numpy(dtype=float))
            xs = xs[np.isfinite(xs)]
            got = sorted_stats(reduction.run, base, f"c{i}__", xs.size, plan)
            # numpy is the reference: quantiles (default linear), order statistics, steps.
            grid = np.quantile(xs, np.linspace(0, 1, plan.grid))
            np.testing.assert_array_equal(got.grid, grid)
            np.testing.assert_array_equal(got.order, xs[bins.positions(xs.size, plan)])
            steps = np.diff(xs)
            assert got.gap == steps[steps > 0].min()
            assert got.distinct == np.unique(xs).size
    finally:
        source.close()


def test_positions_asked_cover_bins_and_grid():
    plan = bin_plan()
    wanted = needed_positions(12_345, plan)
    assert np.all(np.diff(wanted) > 0) and wanted[0] == 0 and wanted[-1] == 12_344
    assert set(bins.positions(12_345, plan)) <= set(wanted.tolist())


def _mixed(rows: int = 15_000, seed: int = 11) -> pd.DataFrame:
    """A column with between 1,000 and 2,000 values (counted per value first, then binned
    as the file scan bins it) beside one a file scan keeps exact; invented data."""
    rng = np.random.default_rng(seed)
    middling = rng.integers(0, 1_500, rows) / 10.0
    few = rng.integers(0, 900, rows).astype(float)
    lp = -0.5 + 0.002 * (middling - 75) ** 2 / 10 - 0.001 * few
    y = (rng.random(rows) < 1 / (1 + np.exp(-lp))).astype(np.int64)
    return pd.DataFrame({"y": y, "middling": middling, "few": few})


def test_a_column_the_estimate_keeps_exact_but_the_file_bins(tmp_path, capsys):
    path = tmp_path / "m.parquet"
    frame = _mixed()
    frame.to_parquet(path)
    want = scan_json(capsys, str(path), "--outcome", "y")
    assert_same_scan(scan_json(capsys, str(path), "--outcome", "y", "--engine", "duckdb"), want)
    source = open_file_through_duckdb(str(path))
    pushed, _ = source.reduce(source.code_outcome("y", None), ["middling", "few"], bin_plan())
    source.close()
    assert [p.exact for p in pushed] == [False, True]
    truth = [np.unique(frame[n]).size for n in ("middling", "few")]  # numpy's count
    assert [p.distinct for p in pushed] == truth and 1_000 < truth[0] <= 2_000


class _OverGuess(DuckDBDialect):
    """An estimate far above the truth: the sort's exact count must send it back."""

    approx_distinct = "over_guess"


def test_an_estimate_far_too_high_falls_back_to_exact_counts(tmp_path, capsys, monkeypatch):
    path = tmp_path / "few.parquet"
    frame = _mixed()[["y", "few"]]
    frame.to_parquet(path)
    want = scan_json(capsys, str(path), "--outcome", "y")
    source = open_file_through_duckdb(str(path))
    source._run("CREATE MACRO over_guess(x) AS COUNT(x) + 1000000")
    source._reduction.dialect = _OverGuess()
    pushed, _ = source.reduce(source.code_outcome("y", None), ["few"], bin_plan())
    source.close()
    assert pushed[0].exact and pushed[0].distinct == 900
    ys, xs = frame["y"].to_numpy(), frame["few"].to_numpy()
    values = np.unique(xs)
    np.testing.assert_array_equal(pushed[0].x, values)
    np.testing.assert_array_equal(pushed[0].events, [ys[xs == v].sum() for v in values])
    assert want[0]["column"] == "few"


def test_csv_is_staged_in_a_folder_removed_on_close(tmp_path, monkeypatch, capsys):
    path = tmp_path / "b.csv"
    frame = binned_frame()
    # DuckDB's CSV reader types a column holding "inf" as text where pandas reads numbers
    # (a known difference, not the staging's): this file keeps to finite values.
    frame["tied"] = frame["tied"].where(np.isfinite(frame["tied"]))
    frame.to_csv(path, index=False)
    monkeypatch.chdir(tmp_path)
    source = open_file_through_duckdb(str(path))
    folder = source._folder.name
    assert source.relation == duckdb_source.STAGED
    assert (pd.io.common.file_exists(folder)) and any(p.endswith(".duckdb") for p in _ls(folder))
    source.close()
    assert not pd.io.common.file_exists(folder)
    want = scan_json(capsys, str(path), "--outcome", "y")
    assert_same_scan(scan_json(capsys, str(path), "--outcome", "y", "--engine", "duckdb"), want)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["b.csv"]  # nothing left in cwd


def test_a_csv_that_does_not_parse_is_one_line_and_leaves_no_folder(tmp_path, capsys):
    path = tmp_path / "bad.csv"
    path.write_bytes(b"y,x\n1,\xff\xfe2\n0,3\n")  # not UTF-8
    from tui.cli.main import main

    before = set(_ls(duckdb_source.tempfile.gettempdir()))
    assert main(["scan", str(path), "--outcome", "y", "--engine", "duckdb"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("bendwise: ") and err.count("\n") == 1, err
    left = set(_ls(duckdb_source.tempfile.gettempdir())) - before
    assert not [p for p in left if "bendwise-duckdb-" in p]


def _ls(folder: str) -> list[str]:
    import os

    return os.listdir(folder)


def test_connection_runs_under_the_memory_limit(tmp_path):
    path = tmp_path / "b.parquet"
    binned_frame().to_parquet(path)
    source = open_file_through_duckdb(str(path))
    (shown,) = source._run("SELECT current_setting('memory_limit')")[0]
    (order,) = source._run("SELECT current_setting('preserve_insertion_order')")[0]
    source.close()
    megabytes = int(duckdb_source.MEMORY_LIMIT.removesuffix("MB"))
    # DuckDB shows the limit in binary units: 500 MB is 476.8 MiB.
    assert shown == f"{megabytes * 1e6 / 2**20:.1f} MiB" and order is False

"""Scanning data where it lives, through DuckDB (in process): a database file with a table
or a query, and CSV/Parquet files with ``--engine duckdb``. Each must print what the file
scan of the same rows prints; the reduction computed inside DuckDB is exact, so figures
equal to 1e-9 (floating-point sums in another order are the only difference)."""

from __future__ import annotations

import hashlib

import duckdb
import numpy as np
import pandas as pd
import pytest
from conftest import SAMPLE
from source_cases import OUTCOME, assert_same_scan, binned_frame, scan_json

from tui.cli.main import main
from tui.engine.pushed import bin_plan
from tui.intake.sources.duckdb_source import open_file_through_duckdb

COHORT = SAMPLE / "surgical_cohort.csv"


@pytest.fixture(scope="module")
def cohort_duckdb(tmp_path_factory):
    path = tmp_path_factory.mktemp("duck") / "ward.duckdb"
    with duckdb.connect(str(path)) as con:
        con.execute(f"CREATE TABLE cohort AS SELECT * FROM read_csv('{COHORT}')")
        con.execute("CREATE SCHEMA audit")
        con.execute("CREATE TABLE audit.cohort AS SELECT * FROM cohort WHERE age_years >= 50")
    return path


def test_csv_through_duckdb_prints_the_file_scan(capsys):
    want = scan_json(capsys, str(COHORT), "--outcome", OUTCOME)
    got = scan_json(capsys, str(COHORT), "--outcome", OUTCOME, "--engine", "duckdb")
    assert_same_scan(got, want)


def test_database_table_and_query_print_the_file_scan(cohort_duckdb, tmp_path, capsys):
    before = hashlib.sha256(cohort_duckdb.read_bytes()).hexdigest()
    want = scan_json(capsys, str(COHORT), "--outcome", OUTCOME)
    got = scan_json(capsys, str(cohort_duckdb), "--table", "cohort", "--outcome", OUTCOME)
    assert_same_scan(got, want)
    frame = pd.read_csv(COHORT)
    older = tmp_path / "older.csv"
    frame[frame.age_years >= 50].to_csv(older, index=False)
    want = scan_json(capsys, str(older), "--outcome", OUTCOME, "--exclude", "ward")
    query = "SELECT * FROM cohort WHERE age_years >= 50;"
    args = ("--outcome", OUTCOME, "--exclude", "ward")
    assert_same_scan(scan_json(capsys, str(cohort_duckdb), "--query", query, *args), want)
    table = scan_json(capsys, str(cohort_duckdb), "--table", "audit.cohort", *args)
    assert_same_scan(table, want)
    assert hashlib.sha256(cohort_duckdb.read_bytes()).hexdigest() == before  # read-only


def test_binned_columns_get_the_file_scans_bins(tmp_path, capsys):
    path = tmp_path / "binned.parquet"
    binned_frame().to_parquet(path)
    want = scan_json(capsys, str(path), "--outcome", "y")
    got = scan_json(capsys, str(path), "--outcome", "y", "--engine", "duckdb")
    assert_same_scan(got, want)
    source = open_file_through_duckdb(str(path))
    pushed, _ = source.reduce(source.code_outcome("y", None), ["curved", "tied"], bin_plan())
    assert [p.exact for p in pushed] == [False, False]  # the binned path was taken
    assert all(p.x.size <= 1200 for p in pushed)  # counts, not rows, came back
    assert pushed[1].nonfinite == 4 and pushed[1].present == 12_000 - 84


def test_text_outcome_with_event_and_a_csv_with_the_same_rules(tmp_path, capsys):
    frame = pd.read_csv(COHORT)
    frame["status"] = frame.pop(OUTCOME).map({1: "infected", 0: "clean"})
    path = tmp_path / "text.csv"
    frame.to_csv(path, index=False)
    args = (str(path), "--outcome", "status", "--event", "infected")
    assert_same_scan(scan_json(capsys, *args, "--engine", "duckdb"), scan_json(capsys, *args))
    # Without --event both say the same thing.
    assert main(["scan", str(path), "--outcome", "status"]) == 2
    file_message = capsys.readouterr().err
    assert main(["scan", str(path), "--outcome", "status", "--engine", "duckdb"]) == 2
    assert capsys.readouterr().err == file_message
    assert "--event" in file_message


def test_outcome_with_three_values_gets_the_file_message(tmp_path, capsys):
    frame = pd.read_csv(COHORT)
    frame.loc[:2, OUTCOME] = 2
    path = tmp_path / "three.csv"
    frame.to_csv(path, index=False)
    assert main(["scan", str(path), "--outcome", OUTCOME]) == 2
    file_message = capsys.readouterr().err
    assert main(["scan", str(path), "--outcome", OUTCOME, "--engine", "duckdb"]) == 2
    assert capsys.readouterr().err == file_message


@pytest.mark.parametrize(
    ("extra", "words"),
    [
        ((), "name --table NAME or --query SQL"),
        (("--table", "cohort", "--query", "SELECT 1"), "name --table NAME or --query SQL"),
        (("--table", "nowhere"), "nowhere"),
        # --adjust fetches rows under --row-cap (5,000 rows here): above it, one line.
        (("--table", "cohort", "--adjust", "age_years", "--row-cap", "10"), "row cap of 10"),
        (("--table", "cohort", "--exclude", "nope"), "unknown columns: nope"),
        (("--query", "SELEC broken"), "syntax"),
    ],
)
def test_refusals_are_one_line(cohort_duckdb, capsys, extra, words):
    assert main(["scan", str(cohort_duckdb), "--outcome", OUTCOME, *extra]) == 2
    err = capsys.readouterr().err
    assert err.startswith("bendwise: ") and err.count("\n") == 1 and words in err, err


def test_table_option_on_a_plain_file_is_refused(capsys):
    assert main(["scan", str(COHORT), "--outcome", OUTCOME, "--table", "cohort"]) == 2
    assert "--table and --query go with a database" in capsys.readouterr().err


def test_csv_column_led_by_infinities_is_scanned_like_the_file(tmp_path, capsys):
    # DuckDB's CSV sniffer types a column whose first values are "inf" as text; the file
    # scan reads them as infinite numbers (pandas' parser, as most CSV readers do) and
    # counts them as non-finite. Through DuckDB the column must be scanned the same way.
    rng = np.random.default_rng(11)
    n = 3_000
    x = rng.normal(50, 10, n)
    y = (rng.random(n) < 1 / (1 + np.exp(-(x - 50) / 8))).astype(int)
    spike = rng.gamma(2.0, 3.0, n).astype(object)
    spike[:30] = "inf"
    spike[rng.choice(np.arange(30, n), 10, replace=False)] = "-inf"
    path = tmp_path / "spikes.csv"
    pd.DataFrame({"y": y, "x": x, "spike": spike}).to_csv(path, index=False)
    before = path.read_bytes()
    want = scan_json(capsys, str(path), "--outcome", "y")
    got = scan_json(capsys, str(path), "--outcome", "y", "--engine", "duckdb")
    assert_same_scan(got, want)
    row = next(r for r in got if r["column"] == "spike")
    assert row["score"] is not None and row["n"] == n - 40
    assert "non-finite" in row["flags"]
    assert path.read_bytes() == before  # the input is never modified


def test_duckdb_draws_no_progress_bar_of_its_own(capfd, monkeypatch):
    # DuckDB's own bar (drawn for statements over two seconds, as on 10,000,000 rows) would
    # cut across the scan's progress lines and the review's screen. Here every connection
    # is first set to draw it at once, on a statement long enough to show it.
    connect = duckdb.connect

    def eager(*args, **kwargs):
        con = connect(*args, **kwargs)
        con.execute("SET progress_bar_time = 0")
        return con

    monkeypatch.setattr(duckdb, "connect", eager)
    source = open_file_through_duckdb(str(COHORT))
    capfd.readouterr()  # the set-up's own statements, before the bar is switched off
    try:
        source._run("SELECT count(*) FROM range(50000000) AS t(i) WHERE i % 7 = 1")
    finally:
        source.close()
    drawn = capfd.readouterr()
    assert "%" not in drawn.out + drawn.err

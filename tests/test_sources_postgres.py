"""Scanning a PostgreSQL table or query where it lives, on a throwaway server (``pg_server``,
127.0.0.1). The server computes every count and the exact quantiles (percentile_disc,
percentile_cont), so each scan equals the file scan of the same rows to 1e-9. No secret
reaches any output."""

from __future__ import annotations

import os

import pandas as pd
import pytest
from conftest import SAMPLE
from pg_server import load_frame
from source_cases import OUTCOME, assert_same_scan, binned_frame, scan_json

from tui.cli.main import main

COHORT = SAMPLE / "surgical_cohort.csv"
SECRET = "s3cret-Hunter2-do-not-print"


@pytest.fixture(scope="module")
def cohort_url(pg_server, tmp_path_factory):
    url = pg_server.create_database("bendwise_sources")
    with pg_server.connect("bendwise_sources") as con:
        load_frame(con, "cohort", pd.read_csv(COHORT))
        load_frame(con, "cohort", pd.read_csv(COHORT), schema="Ward A")
        load_frame(con, "binned", binned_frame(rows=10_500, seed=11))
    return url


def test_table_prints_the_file_scan(cohort_url, capsys):
    want = scan_json(capsys, str(COHORT), "--outcome", OUTCOME)
    assert_same_scan(scan_json(capsys, cohort_url, "--table", "cohort", "--outcome", OUTCOME), want)
    schema = scan_json(capsys, cohort_url, "--table", "Ward A.cohort", "--outcome", OUTCOME)
    assert_same_scan(schema, want)


def test_query_prints_the_file_scan_of_its_rows(cohort_url, tmp_path, capsys):
    frame = pd.read_csv(COHORT)
    subset = tmp_path / "emergency.csv"
    frame[frame.emergency_admission == 1].to_csv(subset, index=False)
    args = ("--outcome", OUTCOME, "--exclude", "ward")
    want = scan_json(capsys, str(subset), *args)
    query = "SELECT * FROM cohort WHERE emergency_admission = 1"
    assert_same_scan(scan_json(capsys, cohort_url, "--query", query, *args), want)


def test_binned_columns_and_booleans_equal_the_file_scan(cohort_url, tmp_path, capsys):
    path = tmp_path / "binned.parquet"
    binned_frame(rows=10_500, seed=11).to_parquet(path)
    want = scan_json(capsys, str(path), "--outcome", "y")
    got = scan_json(capsys, cohort_url, "--table", "binned", "--outcome", "y")
    assert_same_scan(got, want)
    assert {r["column"] for r in got} == {"curved", "skewed", "tied", "whole", "flag"}


def test_a_url_with_a_password_is_refused_without_showing_it(cohort_url, capsys):
    with_password = cohort_url.replace("postgres@", f"postgres:{SECRET}@")
    assert main(["scan", with_password, "--table", "cohort", "--outcome", OUTCOME]) == 2
    err = capsys.readouterr().err
    assert "PGPASSWORD" in err and "password file" in err and SECRET not in err
    in_query = f"{cohort_url}?password={SECRET}"
    assert main(["scan", in_query, "--table", "cohort", "--outcome", OUTCOME]) == 2
    err = capsys.readouterr().err
    assert "PGPASSWORD" in err and SECRET not in err


def test_no_secret_reaches_output_errors_or_files(cohort_url, pg_server, tmp_path):
    env = {**os.environ, "PGPASSWORD": SECRET}
    out = tmp_path / "scan.json"
    runs = [
        ("scan", cohort_url, "--table", "cohort", "--outcome", OUTCOME, "--output", str(out)),
        ("scan", cohort_url, "--table", "cohort", "--outcome", "nope"),
        ("scan", cohort_url, "--table", "absent", "--outcome", OUTCOME),
        ("scan", cohort_url, "--query", f"SELECT '{SECRET}' + 1", "--outcome", OUTCOME),
        ("scan", pg_server.url_for("no_such_db"), "--table", "t", "--outcome", OUTCOME),
        ("scan", f"postgresql://postgres@127.0.0.1:{_closed_port()}/x", "--table", "t",
         "--outcome", OUTCOME),
    ]  # fmt: skip
    codes = []
    for argv in runs:
        done = _run(env, argv)
        codes.append(done.returncode)
        assert SECRET not in done.stdout + done.stderr, argv
        assert "Traceback" not in done.stderr
    assert codes == [0, 2, 2, 2, 2, 2]
    assert SECRET not in out.read_text(encoding="utf-8")


def _run(env, argv):
    import subprocess
    import sys

    return subprocess.run(
        [sys.executable, "-m", "tui", *argv], capture_output=True, text=True, env=env, timeout=300
    )


def _closed_port() -> int:
    import socket

    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]

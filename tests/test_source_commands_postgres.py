"""forms, check, report and review on a real PostgreSQL server (``pg_server``, 127.0.0.1):
the server's counts and exact quantiles give the file path's figures; no password set in
PGPASSWORD reaches any output, message, log or report."""

from __future__ import annotations

import json
import os
import subprocess
import sys

import pandas as pd
import pytest
from conftest import SAMPLE
from pg_server import load_frame
from source_cases import OUTCOME
from source_commands import FORMS_COLUMNS, assert_close, check_json, report_lines, run_json
from test_check import FRESH, learned_log

from tui import recodings
from tui.cli.main import main

COHORT = SAMPLE / "surgical_cohort.csv"
SECRET = "pg-Secret-77-never-shown"


@pytest.fixture(scope="module")
def url(pg_server):
    url = pg_server.create_database("bendwise_commands")
    with pg_server.connect("bendwise_commands") as con:
        load_frame(con, "cohort", pd.read_csv(COHORT))
        load_frame(con, "fresh", pd.read_csv(FRESH))
    return url


@pytest.fixture(scope="module")
def log_path(tmp_path_factory):
    log = learned_log({"crp_mg_l": "log", "bmi": "quadratic", "height_cm": "spline"})
    path = tmp_path_factory.mktemp("pglog") / "log.json"
    recodings.save(log, path)
    return path


@pytest.mark.parametrize("column", FORMS_COLUMNS)
def test_forms_equal_the_file(url, capsys, column):
    args = ("--outcome", OUTCOME, "--column", column, "--resamples", "20")
    want = run_json(capsys, "forms", str(COHORT), *args)
    assert_close(run_json(capsys, "forms", url, "--table", "cohort", *args), want)


def test_check_equals_the_file(url, log_path, capsys):
    want = check_json(capsys, log_path, str(FRESH))
    assert_close(check_json(capsys, log_path, url, "--table", "fresh"), want, tol=1e-7)
    query = "SELECT * FROM fresh WHERE emergency_admission = 0"
    frame = pd.read_csv(FRESH)
    planned = log_path.parent / "fresh_planned.csv"  # the query's rows as a file
    frame[frame.emergency_admission == 0].to_csv(planned, index=False)
    want = check_json(capsys, log_path, str(planned))
    assert_close(check_json(capsys, log_path, url, "--query", query), want, tol=1e-7)


def test_report_equals_the_file(url, log_path, tmp_path):
    want, got = tmp_path / "file.md", tmp_path / "pg.md"
    assert main(["report", str(log_path), "--data", str(COHORT), "--output", str(want)]) == 0
    args = ["report", str(log_path), "--data", url, "--table", "cohort", "--output", str(got)]
    assert main(args) == 0
    assert report_lines(got) == report_lines(want)


def test_review_opens_on_the_server_and_equals_the_file(url, tmp_path):
    from source_review import review_matches_file

    from tui.intake.sources import open_source

    review_matches_file(open_source(url, "cohort"), OUTCOME, COHORT, tmp_path)
    log = recodings.load(tmp_path / "source.recodings.json")
    engine = log.source.engine
    assert (engine.engine, engine.database, engine.table) == (
        "postgresql",
        "bendwise_commands",
        "cohort",
    )
    assert engine.host.startswith("127.0.0.1:")


def test_an_adjusted_check_on_the_server_respects_the_cap(url, capsys):
    adjust = ("--outcome", OUTCOME, "--adjust", "age_years", "--format", "csv")
    assert main(["scan", str(COHORT), *adjust]) == 0
    want = capsys.readouterr().out
    assert main(["scan", url, "--table", "cohort", *adjust, "--row-cap", "5000"]) == 0
    assert capsys.readouterr().out == want
    assert main(["scan", url, "--table", "cohort", *adjust, "--row-cap", "4999"]) == 2
    assert "exceed the row cap of 4,999" in capsys.readouterr().err


def test_no_password_reaches_output_messages_logs_or_reports(url, log_path, tmp_path):
    env = {**os.environ, "PGPASSWORD": SECRET}
    report, out, review_log = tmp_path / "r.html", tmp_path / "c.json", tmp_path / "rv.json"
    good = [
        ("forms", url, "--table", "cohort", "--outcome", OUTCOME, "--column", "bmi"),
        ("check", str(log_path), url, "--table", "fresh", "--output", str(out)),
        ("report", str(log_path), "--data", url, "--table", "cohort", "--output", str(report)),
        ("scan", url, "--table", "cohort", "--outcome", OUTCOME, "--adjust", "age_years"),
    ]
    bad = [
        ("forms", url, "--query", f"SELECT '{SECRET}' + 1", "--outcome", OUTCOME, "--column", "x"),
        ("check", str(log_path), url, "--table", "absent"),
        ("report", str(log_path), "--data", url, "--query", f"SELECT {SECRET}", "--output", "x.md"),
        ("scan", url, "--table", "cohort", "--outcome", OUTCOME, "--adjust", "age_years",
         "--row-cap", "3"),
    ]  # fmt: skip
    for argv in good + bad:
        done = subprocess.run(
            [sys.executable, "-m", "tui", *argv], capture_output=True, text=True, env=env,
            timeout=300, cwd=tmp_path,
        )  # fmt: skip
        assert done.returncode == (0 if argv in good else 2), (argv, done.stderr)
        assert SECRET not in done.stdout + done.stderr, argv
        assert "Traceback" not in done.stderr
    # A review's log (opened without the screen) and the written files hold no secret.
    code = _review_without_screen(env, url, review_log, tmp_path)
    assert code == 0
    for path in (report, out, review_log):
        assert SECRET not in path.read_text(encoding="utf-8"), path
    assert "postgres@" not in review_log.read_text() and "password" not in review_log.read_text()


def _review_without_screen(env, url, log, folder) -> int:
    """Open the review session on the server, accept linear for one column, save."""
    script = f"""
from tui.app.source_session import open_source_session
from tui.app.fit_cache import FitCache, FitRequest
from tui.engine.reduced_data import reduce_data
from tui.intake.sources import open_source
source = open_source({url!r}, "cohort")
data = reduce_data(source, {OUTCOME!r}, None)
source.close()
session = open_source_session(data, data.source_info(), {str(log)!r})
fits = FitCache(session.dataset, 1000).fits(FitRequest("bmi", 4, 4))
session.accept("bmi", fits.table.linear, 4, 4)
session.book.close()
"""
    done = subprocess.run(
        [sys.executable, "-c", script], capture_output=True, text=True, env=env, cwd=folder,
        timeout=300,
    )  # fmt: skip
    assert SECRET not in done.stdout + done.stderr
    assert done.returncode == 0, done.stderr
    json.loads(log.read_text())
    return done.returncode

"""forms, check, report and review on a DuckDB database and through --engine duckdb: the
same rows give the file path's figures (exact reduction: to 1e-9; a binned column: within
the binning tolerance)."""

from __future__ import annotations

import duckdb
import numpy as np
import pandas as pd
import pytest
from conftest import SAMPLE
from source_cases import OUTCOME, binned_frame
from source_commands import FORMS_COLUMNS, assert_close, check_json, report_lines, run_json
from test_check import FRESH, learned_log

from tui import recodings
from tui.cli.main import main
from tui.recodings.model import Decision

COHORT = SAMPLE / "surgical_cohort.csv"


@pytest.fixture(scope="module")
def database(tmp_path_factory):
    path = tmp_path_factory.mktemp("duck") / "cohort.duckdb"
    con = duckdb.connect(str(path))
    con.register("t", pd.read_csv(COHORT))
    con.execute("CREATE TABLE cohort AS SELECT * FROM t")
    con.register("f", pd.read_csv(FRESH))
    con.execute("CREATE TABLE fresh AS SELECT * FROM f")
    con.register("b", binned_frame(rows=12_000, seed=5))
    con.execute("CREATE TABLE binned AS SELECT * FROM b")
    con.close()
    return path


@pytest.mark.parametrize("column", FORMS_COLUMNS)
def test_forms_equal_the_file(database, capsys, column):
    args = ("forms", "--outcome", OUTCOME, "--column", column, "--resamples", "20")
    want = run_json(capsys, args[0], str(COHORT), *args[1:])
    got = run_json(capsys, args[0], str(database), "--table", "cohort", *args[1:])
    assert_close(got, want)


def test_forms_of_a_binned_column_equal_the_file(database, tmp_path, capsys):
    # DuckDB's quantiles are exact, so the bins are the file scan's own.
    path = tmp_path / "binned.parquet"
    binned_frame(rows=12_000, seed=5).to_parquet(path)
    args = ("--outcome", "y", "--column", "skewed")
    want = run_json(capsys, "forms", str(path), *args)
    assert_close(run_json(capsys, "forms", str(database), "--table", "binned", *args), want)
    assert_close(run_json(capsys, "forms", str(path), "--engine", "duckdb", *args), want)


def test_forms_name_a_missing_or_text_column(database, capsys):
    base = ["forms", str(database), "--table", "cohort", "--outcome", OUTCOME]
    assert main([*base, "--column", "nope"]) == 2
    assert "has no column(s) 'nope'" in capsys.readouterr().err


@pytest.fixture(scope="module")
def fill_log(tmp_path_factory):
    """The planted bends, one with a fill and an indicator, and a column set aside."""
    from dataclasses import replace

    from tui.engine.forms import MissingFill

    log = learned_log(
        {"crp_mg_l": "log", "bmi": "quadratic", "height_cm": "spline", "sodium_mmol_l": "linear"}
    )
    first = log.decisions[0]
    recoding = replace(first.recoding, missing=MissingFill(4.0, True))
    filled = Decision.make(
        first.column, recoding, first.range, evidence={"form": "log"}, deciles=first.deciles
    )
    third = log.decisions[2]  # height: filled without an indicator
    plain = Decision.make(
        third.column,
        replace(third.recoding, missing=MissingFill(170.0, False)),
        third.range,
        evidence={"form": "spline"},
        deciles=third.deciles,
    )
    log = replace(log, decisions=(filled, log.decisions[1], plain, log.decisions[3]))
    path = tmp_path_factory.mktemp("logs") / "log.json"
    recodings.save(log, path)
    return path


def test_check_equals_the_file(database, fill_log, capsys):
    want = check_json(capsys, fill_log, str(FRESH))
    got = check_json(capsys, fill_log, str(database), "--table", "fresh")
    assert_close(got, want, tol=1e-7)
    assert [r["verdict"] for r in got][:2] == ["holds", "holds"]
    assert got[0]["missing"] == 31 and got[-1]["kind"] == "set aside"
    csv = check_json(capsys, fill_log, str(FRESH), "--engine", "duckdb")
    assert_close(csv, want, tol=1e-7)


def test_check_names_a_column_the_source_lacks(database, fill_log, capsys):
    query = "SELECT wound_infection_30d, bmi FROM fresh"
    assert main(["check", str(fill_log), str(database), "--query", query]) == 2
    err = capsys.readouterr().err
    assert "lacks column(s) the log recodes: crp_mg_l, height_cm, sodium_mmol_l;" in err


def test_check_names_the_closest_column_of_the_source(database, fill_log, capsys):
    query = "SELECT wound_infection_30d, bmi, crp_mg_l AS crp_mg_per_l FROM fresh"
    assert main(["check", str(fill_log), str(database), "--query", query]) == 2
    err = capsys.readouterr().err
    assert "recodes: crp_mg_l (closest: crp_mg_per_l), height_cm, sodium_mmol_l;" in err


def test_report_equals_the_file_but_for_the_data_lines(database, tmp_path):
    log = learned_log({"crp_mg_l": "log", "bmi": "quadratic", "height_cm": "spline"})
    path = tmp_path / "log.json"
    recodings.save(log, path)
    want, got = tmp_path / "file.md", tmp_path / "duck.md"
    assert main(["report", str(path), "--data", str(COHORT), "--output", str(want)]) == 0
    args = ["report", str(path), "--data", str(database), "--table", "cohort"]
    assert main([*args, "--output", str(got)]) == 0
    assert report_lines(got) == report_lines(want)
    text = got.read_text()
    assert "| source | duckdb cohort.duckdb table cohort |" in text
    assert "| fingerprint | " in text


def test_a_report_of_adjusted_decisions_fetches_rows_under_the_cap(database, tmp_path, capsys):
    # Covariates need rows: the report fetches them under --row-cap and then equals the
    # file's report; above the cap it stops with one line and writes nothing.
    log = learned_log({"bmi": "quadratic"})
    first = log.decisions[0]
    adjusted = Decision.make(
        first.column,
        first.recoding,
        first.range,
        evidence={"form": "quadratic", "adjusted_for": ["age_years"]},
    )
    from dataclasses import replace

    path = tmp_path / "log.json"
    recodings.save(replace(log, decisions=(adjusted,)), path)
    args = ["report", str(path), "--data", str(database), "--table", "cohort"]
    assert main([*args, "--output", str(tmp_path / "r.md"), "--row-cap", "4999"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "exceed the row cap of 4,999" in err
    assert not (tmp_path / "r.md").exists()
    want, got = tmp_path / "file.md", tmp_path / "duck.md"
    assert main(["report", str(path), "--data", str(COHORT), "--output", str(want)]) == 0
    assert main([*args, "--output", str(got)]) == 0
    assert report_lines(got) == report_lines(want)
    text = got.read_text()
    assert "adjusted for" in text and "age_years" in text
    assert "| source | duckdb cohort.duckdb table cohort |" in text
    assert "| same data as the log's training data | no |" in text


def test_review_opens_on_the_database_and_equals_the_file(database, tmp_path):
    from source_review import review_matches_file

    from tui.intake.sources import open_source

    review_matches_file(open_source(str(database), "cohort"), OUTCOME, COHORT, tmp_path)


def _csv_scan(capsys, *args: str) -> str:
    assert main(["scan", *args, "--format", "csv"]) == 0, capsys.readouterr().err
    return capsys.readouterr().out


def test_an_adjusted_scan_fetches_rows_up_to_the_cap(database, capsys):
    # 5,000 rows: a cap of 5,000 fetches them and gives the file's adjusted scan exactly.
    adjust = ("--outcome", OUTCOME, "--adjust", "age_years,ward", "--weight", "bmi")
    want = _csv_scan(capsys, str(COHORT), *adjust)
    got = _csv_scan(capsys, str(database), "--table", "cohort", *adjust, "--row-cap", "5000")
    assert got == want


def test_an_adjusted_scan_above_the_cap_stops_with_one_line(database, capsys):
    args = ["scan", str(database), "--table", "cohort", "--outcome", OUTCOME]
    assert main([*args, "--adjust", "age_years", "--row-cap", "4999"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert "5,000 rows exceed the row cap of 4,999" in err and "--row-cap" in err


def test_an_adjusted_review_fetches_under_the_cap_and_stops_above_it(
    database, tmp_path, monkeypatch, capsys
):
    from tui.app.app import ReviewApp

    opened = []
    monkeypatch.setattr(ReviewApp, "run", lambda self: opened.append(self.session))
    log = tmp_path / "r.recodings.json"
    args = ["review", str(database), "--table", "cohort", "--outcome", OUTCOME, "--log", str(log)]
    assert main([*args, "--adjust", "age_years", "--row-cap", "4999"]) == 2
    assert "exceed the row cap of 4,999" in capsys.readouterr().err and not opened
    assert main([*args, "--adjust", "age_years", "--row-cap", "5000"]) == 0
    session = opened[-1]
    assert session.adjust == ("age_years",) and session.dataset.rows == 5000
    assert session.log.source.engine.table == "cohort"
    assert main(args) == 0  # no covariates: the engine's counts, no rows fetched
    assert type(opened[-1].dataset).__name__ == "ReducedData"


def test_a_working_model_rescore_of_engine_counts_is_refused(database, tmp_path):
    from tui.app.source_session import open_source_session
    from tui.engine.reduced_data import reduce_data
    from tui.intake.sources import open_source
    from tui.problems import InputProblem

    source = open_source(str(database), "cohort")
    data = reduce_data(source, OUTCOME, None)
    source.close()
    session = open_source_session(data, data.source_info(), tmp_path / "log.json")
    session.working_model = lambda: ("age_years",)  # as after a decision
    with pytest.raises(InputProblem, match="keeps in its engine"):
        session.model_basis()
    session.book.close()


def test_the_log_keeps_where_engine_data_lived_and_old_logs_load_as_before(database, tmp_path):
    from conftest import GOLDEN

    from tui.engine.reduced_data import reduce_data
    from tui.intake.sources import open_source
    from tui.recodings.model import EngineInfo, SourceInfo

    query = "SELECT * FROM cohort WHERE age_years > 40"
    source = open_source(str(database), query=query)
    data = reduce_data(source, OUTCOME, None)
    source.close()
    record = data.source_info()
    assert record.name == "query" and record.fingerprint == data.fingerprint
    import hashlib

    assert record.where["query_sha256"] == hashlib.sha256(query.encode()).hexdigest()
    assert "table" not in record.where and "host" not in record.where
    log = learned_log({"bmi": "quadratic"})
    from dataclasses import replace

    info = SourceInfo(record.name, record.rows, record.fingerprint, EngineInfo(**record.where))
    path = tmp_path / "log.json"
    recodings.save(replace(log, source=info), path)
    assert recodings.load(path).source == info
    text = path.read_text()
    assert query not in text and '"query_sha256"' in text
    old = recodings.load(GOLDEN / "every_kind.recodings.json")
    assert old.source.engine is None


def test_the_fingerprint_is_the_documented_hash(database):
    # FORMAT.md: SHA-256 of [rows, events, [[column, finite count, sum to 10 digits], ...]].
    import hashlib
    import json

    import numpy as np

    from tui.engine.reduced_data import reduce_data
    from tui.intake.sources import open_source

    source = open_source(str(database), "cohort")
    got = reduce_data(source, OUTCOME, None).fingerprint
    source.close()
    frame = pd.read_csv(COHORT)
    columns = []
    for name in frame.columns:
        if name == OUTCOME or not pd.api.types.is_numeric_dtype(frame[name]):
            continue
        x = frame[name].to_numpy(dtype=float)
        x = x[np.isfinite(x)]
        columns.append([name, int(x.size), float(f"{x.sum():.10g}") if x.size else None])
    text = json.dumps([len(frame), int(frame[OUTCOME].sum()), columns], separators=(",", ":"))
    assert got == hashlib.sha256(text.encode()).hexdigest()


def test_the_column_screen_fits_of_a_binned_column_equal_the_file(database, tmp_path):
    # DuckDB's quantiles are exact, so a binned column's bins, groups and table are the file's.
    from tui.app.fit_cache import FitCache, FitRequest
    from tui.engine.reduced_data import reduce_data
    from tui.intake.dataset import open_dataset
    from tui.intake.sources import open_source

    path = tmp_path / "binned.parquet"
    binned_frame(rows=12_000, seed=5).to_parquet(path)
    source = open_source(str(database), "binned")
    data = reduce_data(source, "y", None)
    source.close()
    file_data = open_dataset(path, "y")
    for column in ("skewed", "tied"):
        got = FitCache(data, 1000).fits(FitRequest(column, 5, 4))
        want = FitCache(file_data, 1000).fits(FitRequest(column, 5, 4))
        assert not got.counts.exact and got.counts.x.size == want.counts.x.size
        for a, b in zip(got.table.rows, want.table.rows, strict=True):
            assert a.label == b.label
            assert a.aic == pytest.approx(b.aic, rel=1e-9), (column, a.label)
        assert [g.n for g in got.groups] == [g.n for g in want.groups]
        assert got.tails == pytest.approx(want.tails, rel=1e-12)
        assert data.deciles(column) == pytest.approx(
            np.quantile(file_data.values(column)[np.isfinite(file_data.values(column))],
                        [0.1 * k for k in range(1, 10)]), rel=1e-12)  # fmt: skip


def test_no_command_writes_over_the_database_it_reads(database, tmp_path, monkeypatch, capsys):
    # The rule every writer follows (never over an input) holds for a database file too.
    from tui.app.app import ReviewApp

    monkeypatch.setattr(ReviewApp, "run", lambda self: None)
    before = database.read_bytes()
    base = [str(database), "--table", "cohort", "--outcome", OUTCOME]
    for args in (
        ["review", *base, "--log", str(database)],
        ["scan", *base, "--output", str(database), "--force"],
    ):
        assert main(args) == 2
        err = capsys.readouterr().err
        assert err.count("\n") == 1 and "Traceback" not in err
        assert str(database) in err and ("data file" in err or "overwrite" in err)
    assert database.read_bytes() == before


def test_the_decision_preview_of_engine_counts_is_not_called_rows(database, tmp_path):
    # A source's rows never leave the engine: the preview shows values of its counts, and
    # says so, where a file's review shows its first rows.
    import asyncio

    from app_fleet import settle

    from tui.app.app import ReviewApp
    from tui.app.screens.inspect import InspectScreen
    from tui.app.screens.recorded_view import RecordedView
    from tui.app.source_session import open_source_session
    from tui.app.widgets.line import Line
    from tui.app.widgets.triage_table import TriageTable
    from tui.engine.reduced_data import reduce_data
    from tui.intake.sources import open_source

    source = open_source(str(database), "cohort")
    try:
        data = reduce_data(source, OUTCOME, None)
    finally:
        source.close()
    session = open_source_session(data, data.source_info(), tmp_path / "s.recodings.json")
    assert not session.preview_from_rows
    seen: dict[str, object] = {}

    async def go() -> None:
        app = ReviewApp(session)
        async with app.run_test(size=(80, 24)) as pilot:
            for _ in range(600):
                await pilot.pause(0.05)
                if session.scan_finished:
                    break
            await settle(pilot)
            pilot.app.screen.query_one(TriageTable).move_to_key("bmi")
            await pilot.press("enter")
            await settle(pilot)
            assert isinstance(pilot.app.screen, InspectScreen)
            await pilot.press("l")
            await settle(pilot)
            view = pilot.app.screen
            assert isinstance(view, RecordedView)
            seen["heading"] = str(view.query_one("#heading", Line).render())
            seen["first"] = view.preview.columns[0].header
            seen["values"] = list(view.preview.columns[1].cells)

    asyncio.run(go())
    session.book.close()
    assert seen["heading"].startswith("First 8 values of the engine's counts")
    assert "rows" not in seen["heading"].split("(")[0]
    assert seen["first"] == "#"
    # The values shown are the counts' first (smallest) values, in order.
    shown = [float(v) for v in seen["values"]]
    assert shown == sorted(shown) and shown[0] == pd.read_csv(COHORT)["bmi"].min()

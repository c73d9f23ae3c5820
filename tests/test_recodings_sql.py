"""SQL export: golden text per dialect, and DuckDB (in-process) agreeing with Python replay."""

from __future__ import annotations

import duckdb
import numpy as np
import pandas as pd
import pytest
from recodings_cases import (
    EVERY_KIND,
    FRESH,
    OUTCOME,
    TRAINING,
    assert_same_outputs,
    edge_values,
    every_kind_log,
    golden_text,
    output_columns,
)

from tui import recodings
from tui.engine.forms import make_recoding
from tui.intake import read_table
from tui.recodings import Decision, RecodingLog, SourceInfo
from tui.recodings.sql import DIALECTS, table_reference


def _duckdb_replay(log: RecodingLog, csv_path, key: str = "record_id") -> pd.DataFrame:
    """The log's SQL run by DuckDB over a CSV file, rows in ``key`` order."""
    con = duckdb.connect()
    con.execute(f"CREATE TABLE cohort AS SELECT * FROM read_csv('{csv_path}')")
    sql = recodings.to_sql(log, "duckdb", "cohort")
    return con.execute(f"SELECT * FROM ({sql}) AS replayed ORDER BY {key}").df()


@pytest.mark.parametrize("dialect", sorted(DIALECTS))
def test_sql_text_matches_the_golden_file(dialect):
    text = recodings.to_sql(every_kind_log(), dialect)
    assert text == golden_text(f"every_kind.{dialect}.sql", text)


def test_dialects_differ_in_quoting_and_double_type():
    log = every_kind_log()
    duck, pg, spark = (recodings.to_sql(log, d) for d in ("duckdb", "postgres", "spark"))
    assert 'CAST("age_years" AS DOUBLE)' in duck and "`" not in duck
    assert 'CAST("age_years" AS DOUBLE PRECISION)' in pg and "`" not in pg
    assert "CAST(`age_years` AS DOUBLE)" in spark and '"age_years"' not in spark
    for text in (duck, pg, spark):
        assert text.startswith("-- bendwise recodings")
        assert "SELECT\n  *,\n" in text
        assert text.rstrip().endswith('FROM "surgical_cohort"') or text.rstrip().endswith(
            "FROM `surgical_cohort`"
        )
        assert text.count(" AS ") >= len(output_columns(log))


def test_duckdb_equals_python_replay_for_every_kind_on_the_training_data():
    log = every_kind_log()
    python = recodings.apply_to_frame(log, read_table(TRAINING)).sort_values("record_id")
    database = _duckdb_replay(log, TRAINING)
    assert len(database) == len(python)
    assert list(database.columns) == list(python.columns)
    assert_same_outputs(python.reset_index(drop=True), database, output_columns(log))


def test_duckdb_equals_python_replay_on_the_fresh_extract():
    # The fresh extract has values beyond the training range (and albumin renamed).
    log = every_kind_log().without("albumin_g_l")
    python = recodings.apply_to_frame(log, read_table(FRESH)).sort_values("record_id")
    database = _duckdb_replay(log, FRESH)
    assert_same_outputs(python.reset_index(drop=True), database, output_columns(log))


def test_duckdb_equals_python_at_cut_points_knots_clip_bounds_and_missing(tmp_path):
    log = every_kind_log()
    values = edge_values(log) + [np.nan]
    columns = {column: values for column, _, _ in EVERY_KIND}
    frame = pd.DataFrame({"row": np.arange(len(values)), **columns})
    path = tmp_path / "edges.csv"
    frame.to_csv(path, index=False)
    python = recodings.apply_to_frame(log, read_table(path))
    database = _duckdb_replay(log, path, key="row")
    assert_same_outputs(python, database, output_columns(log))
    # Non-positive shifted x gives missing log and power outputs in both.
    assert python["weight_change_kg__log"].isna().sum() > 1
    assert (
        python["weight_change_kg__log"].isna().sum()
        == database["weight_change_kg__log"].isna().sum()
    )


def test_nan_and_infinity_stored_in_the_database_count_as_missing():
    log = RecodingLog(
        OUTCOME,
        1,
        SourceInfo("t.csv", 4, "0" * 64),
        (
            Decision.make("x", make_recoding("indicator", {"cut": 2.0}), (0, 5)),
            Decision.make("z", make_recoding("log", {"shift": 0.0}), (0, 5)),
        ),
    )
    con = duckdb.connect()
    con.execute(
        "CREATE TABLE t AS SELECT * FROM (VALUES (1, 1.0, 1.0), (2, 'nan'::DOUBLE, 'inf'::DOUBLE),"
        " (3, '-inf'::DOUBLE, NULL), (4, 3.0, 'nan'::DOUBLE)) AS v(id, x, z)"
    )
    database = con.execute(
        f"SELECT * FROM ({recodings.to_sql(log, 'duckdb', 't')}) ORDER BY id"
    ).df()
    python = recodings.apply_to_frame(
        log, pd.DataFrame({"x": [1.0, np.nan, -np.inf, 3.0], "z": [1.0, np.inf, np.nan, np.nan]})
    )
    assert_same_outputs(python, database, ["x__below", "z__log"])
    assert database["x__below"].isna().tolist() == [False, True, True, False]


def test_any_column_name_is_quoted_safely_in_duckdb():
    odd = ['Body "mass"', "wt-change (kg)", "select", "a`b", "Ümlaut"]
    decisions = []
    taken: set[str] = set()
    for name in odd:
        d = Decision.make(name, make_recoding("hinge", {"knot": 1.0}), (0, 3), taken=taken)
        taken |= set(d.outputs)
        decisions.append(d)
    log = RecodingLog(OUTCOME, 1, SourceInfo("t.csv", 3, "0" * 64), tuple(decisions))
    log = recodings.loads(recodings.dumps(log))  # such names survive the file too
    frame = pd.DataFrame({name: [0.5, 2.0, np.nan] for name in odd})
    con = duckdb.connect()
    con.register("odd_frame", frame)
    database = con.execute(recodings.to_sql(log, "duckdb", "odd_frame")).df()
    python = recodings.apply_to_frame(log, frame)
    assert list(database.columns) == list(python.columns)
    assert_same_outputs(python, database, output_columns(log))


def test_table_names_are_quoted_part_by_part():
    assert table_reference("analytics.cohort", DIALECTS["postgres"]) == '"analytics"."cohort"'
    assert table_reference("analytics.cohort", DIALECTS["spark"]) == "`analytics`.`cohort`"
    assert table_reference('we"ird', DIALECTS["duckdb"]) == '"we""ird"'
    assert table_reference("a`b", DIALECTS["spark"]) == "`a``b`"
    for bad in ("", "a..b", "a.", "line\nbreak"):
        with pytest.raises(ValueError, match="table name"):
            table_reference(bad, DIALECTS["duckdb"])


def test_line_breaks_in_names_cannot_end_a_comment_early():
    # Names reach the SQL in comments too; a line break there would turn the rest into code.
    name = "x\nDROP TABLE t; --"
    decision = Decision.make(name, make_recoding("linear", {}), (0, 1))
    log = RecodingLog(OUTCOME, 1, SourceInfo("t\nDROP TABLE t;.csv", 1, "0" * 64), (decision,))
    text = recodings.to_sql(log, "duckdb", "t")
    assert all(line.startswith("--") for line in text.splitlines()[:2])
    con = duckdb.connect()
    con.register("frame", pd.DataFrame({name: [0.25, np.nan]}))
    con.execute("CREATE TABLE t AS SELECT * FROM frame")
    out = con.execute(text).df()
    np.testing.assert_array_equal(out[decision.outputs[0]], [0.25, np.nan])
    assert con.execute("SELECT count(*) FROM t").fetchone() == (2,)


@pytest.mark.parametrize("dialect", sorted(DIALECTS))
def test_view_statement_wraps_the_same_select(dialect):
    log = every_kind_log()
    select = recodings.to_sql(log, dialect, "cohort")
    view = recodings.to_sql(log, dialect, "cohort", view="reporting.recoded")
    q = DIALECTS[dialect].quote
    head, body = view.split("\nSELECT\n", 1)
    assert head.splitlines()[-1] == f"CREATE OR REPLACE VIEW {q}reporting{q}.{q}recoded{q} AS"
    assert head.splitlines()[:-1] == select.splitlines()[:2]  # the same header comments
    assert "SELECT\n" + body == select.split("\n", 2)[2].rstrip("\n") + ";\n"


def test_view_names_are_checked_and_may_not_be_the_table_read():
    log = every_kind_log()
    for bad in ("", "a..b", "v\nDROP"):
        with pytest.raises(ValueError, match="view name"):
            recodings.to_sql(log, "duckdb", "cohort", view=bad)
    with pytest.raises(ValueError, match="is the table it reads"):
        recodings.to_sql(log, "postgres", "ward.cohort", view="ward.cohort")


def test_duckdb_view_equals_python_replay():
    log = every_kind_log()
    con = duckdb.connect()
    con.execute(f"CREATE TABLE cohort AS SELECT * FROM read_csv('{TRAINING}')")
    con.execute("CREATE SCHEMA reporting")
    statement = recodings.to_sql(log, "duckdb", "cohort", view='reporting.re"coded')
    con.execute(statement)
    con.execute(statement)  # replaces the view it made
    database = con.execute('SELECT * FROM reporting."re""coded" ORDER BY record_id').df()
    python = recodings.apply_to_frame(log, read_table(TRAINING)).sort_values("record_id")
    assert list(database.columns) == list(python.columns)
    assert_same_outputs(python.reset_index(drop=True), database, output_columns(log))

"""``bendwise sql --dialect postgres`` run in a real PostgreSQL server equals Python replay.

The server is a throwaway cluster on 127.0.0.1 (the ``pg_server`` fixture); the sample cohort
is loaded into tables, the printed SELECT and the ``--view`` statement are executed as printed,
and every output column is compared with ``apply_to_frame`` to 1e-9, NULL where Python has NaN.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from pg_server import load_frame
from recodings_cases import (
    EVERY_KIND,
    FRESH,
    OUTCOME,
    TRAINING,
    assert_missing_rows,
    assert_same_outputs,
    edge_values,
    every_kind_log,
    output_columns,
)

from tui import recodings
from tui.cli.main import main
from tui.engine.forms import MissingFill, make_recoding
from tui.intake import read_table
from tui.recodings import Decision, RecodingLog, SourceInfo


@pytest.fixture(scope="module")
def cohort_db(pg_server):
    """A database holding the training cohort and the fresh extract, in two schemas."""
    pg_server.create_database("bendwise_replay")
    with pg_server.connect("bendwise_replay") as con:
        load_frame(con, "surgical_cohort", read_table(TRAINING))
        load_frame(con, "cohort 2026", read_table(FRESH), schema="Ward Data")
        yield con


def printed_sql(log: RecodingLog, tmp_path, capsys, *options: str) -> str:
    """What ``bendwise sql LOG --dialect postgres OPTIONS`` prints."""
    path = tmp_path / "log.recodings.json"
    recodings.save(log, path)
    capsys.readouterr()
    assert main(["sql", str(path), "--dialect", "postgres", *options]) == 0
    return capsys.readouterr().out


def fetch(con, query: str) -> pd.DataFrame:
    cur = con.execute(query)
    return pd.DataFrame(cur.fetchall(), columns=[c.name for c in cur.description])


def test_select_equals_python_replay_on_the_training_data(cohort_db, tmp_path, capsys):
    log = every_kind_log()
    text = printed_sql(log, tmp_path, capsys)
    database = fetch(cohort_db, f"SELECT * FROM ({text}) AS replayed ORDER BY record_id")
    python = recodings.apply_to_frame(log, read_table(TRAINING)).sort_values("record_id")
    assert len(database) == len(python) == 5000
    assert list(database.columns) == list(python.columns)
    assert_same_outputs(python.reset_index(drop=True), database, output_columns(log))
    assert database[output_columns(log)].isna().to_numpy().any()  # missing x was exercised


def test_view_in_a_quoted_schema_equals_python_replay(cohort_db, tmp_path, capsys):
    # Fresh extract: values beyond the training range, albumin renamed (so left out here).
    log = every_kind_log().without("albumin_g_l")
    text = printed_sql(
        log, tmp_path, capsys, "--table", "Ward Data.cohort 2026", "--view", "Ward Data.recoded"
    )
    assert 'CREATE OR REPLACE VIEW "Ward Data"."recoded" AS' in text
    cohort_db.execute(text)
    cohort_db.execute(text)  # re-running the same statement replaces the view
    database = fetch(cohort_db, 'SELECT * FROM "Ward Data"."recoded" ORDER BY record_id')
    python = recodings.apply_to_frame(log, read_table(FRESH)).sort_values("record_id")
    assert list(database.columns) == list(python.columns)
    assert_same_outputs(python.reset_index(drop=True), database, output_columns(log))


def test_cut_points_knots_clip_bounds_and_stored_nan_and_infinity(cohort_db, tmp_path, capsys):
    # Every number of the log and a step either side, plus NULL, NaN, +inf and -inf stored as
    # double precision values: PostgreSQL keeps the last three as values, replay calls them missing.
    log = every_kind_log()
    values = edge_values(log)
    specials = ["NULL", "'NaN'", "'Infinity'", "'-Infinity'"]
    literals = [repr(v) for v in values] + specials
    columns = [column for column, _, _ in EVERY_KIND]
    rows = ", ".join(
        "(" + ", ".join([str(i)] + [f"{lit}::double precision"] * len(columns)) + ")"
        for i, lit in enumerate(literals)
    )
    names = ", ".join(['"row"'] + [f'"{c}"' for c in columns])
    cohort_db.execute("DROP TABLE IF EXISTS edges")
    cohort_db.execute(f"CREATE TABLE edges AS SELECT * FROM (VALUES {rows}) AS v({names})")
    text = printed_sql(log, tmp_path, capsys, "--table", "edges", "--view", "edges_recoded")
    cohort_db.execute(text)
    database = fetch(cohort_db, 'SELECT * FROM edges_recoded ORDER BY "row"')
    special = [np.nan, np.nan, np.inf, -np.inf]
    frame = pd.DataFrame(
        {"row": range(len(literals)), **{c: values + special for c in columns}}, dtype=float
    )
    python = recodings.apply_to_frame(log, frame)
    assert_same_outputs(python, database, output_columns(log))
    assert_missing_rows(database.iloc[-4:], log)  # filled where the log says so
    assert database["weight_change_kg__log"].isna().sum() > len(specials)  # non-positive x


def test_odd_column_and_table_names_are_quoted_safely(cohort_db, tmp_path, capsys):
    odd = ['Body "mass"', "wt-change (kg)", "select", "a`b", "Ümlaut", "MixedCase"]
    decisions, taken = [], set()
    for name in odd:
        d = Decision.make(name, make_recoding("hinge", {"knot": 1.0}), (0, 3), taken=taken)
        taken |= set(d.outputs)
        decisions.append(d)
    log = RecodingLog(OUTCOME, 1, SourceInfo("t.csv", 3, "0" * 64), tuple(decisions))
    frame = pd.DataFrame({"id": [1, 2, 3], **{name: [0.5, 2.0, np.nan] for name in odd}})
    load_frame(cohort_db, 'odd "table"', frame)
    text = printed_sql(log, tmp_path, capsys, "--table", 'odd "table"', "--view", "odd view")
    cohort_db.execute(text)
    database = fetch(cohort_db, 'SELECT * FROM "odd view" ORDER BY id')
    python = recodings.apply_to_frame(log, frame)
    assert list(database.columns) == list(python.columns)
    assert_same_outputs(python, database, output_columns(log))


def test_missing_fill_and_indicator_for_null_nan_and_infinity(cohort_db, tmp_path, capsys):
    # A fill alone and a fill with an indicator, over NULL and stored NaN and ±infinity.
    log = RecodingLog(
        OUTCOME,
        1,
        SourceInfo("t.csv", 5, "0" * 64),
        (
            Decision.make(
                "x",
                make_recoding("hinge", {"knot": 2.0}, (0.0, 5.0), MissingFill(6.0, True)),
                (0, 9),
            ),
            Decision.make(
                "z", make_recoding("log", {"shift": 0.5}, None, MissingFill(1.5)), (0, 9)
            ),
        ),
    )
    cohort_db.execute("DROP TABLE IF EXISTS filled")
    cohort_db.execute(
        "CREATE TABLE filled AS SELECT * FROM (VALUES (1, 1.0::float8, NULL::float8),"
        " (2, 'NaN'::float8, 'Infinity'::float8), (3, '-Infinity'::float8, 2.0::float8),"
        " (4, NULL::float8, 'NaN'::float8), (5, 3.0::float8, '-Infinity'::float8)) AS v(id, x, z)"
    )
    text = printed_sql(log, tmp_path, capsys, "--table", "filled")
    database = fetch(cohort_db, f"SELECT * FROM ({text}) AS replayed ORDER BY id")
    frame = pd.DataFrame(
        {"x": [1.0, np.nan, -np.inf, np.nan, 3.0], "z": [np.nan, np.inf, 2.0, np.nan, -np.inf]}
    )
    python = recodings.apply_to_frame(log, frame)
    assert_same_outputs(python, database, output_columns(log))
    assert database["x__missing"].tolist() == [0.0, 1.0, 1.0, 1.0, 0.0]
    assert not database[output_columns(log)].isna().to_numpy().any()

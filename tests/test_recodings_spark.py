"""``bendwise sql --dialect spark`` run by Spark in local mode equals Python replay.

One local session (the ``spark`` fixture: one core, 127.0.0.1 only, no UI) runs the printed
SELECT over a temporary view and the ``--view`` statement, as printed, over a catalog table;
every output column is compared with ``apply_to_frame`` to 1e-9, NULL where Python has NaN.
"""

from __future__ import annotations

import math

import pandas as pd
import pytest
from conftest import run_cli
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
from tui.recodings.sql import DIALECTS


def printed_sql(log: RecodingLog, tmp_path, capsys, *options: str) -> str:
    """What ``bendwise sql LOG --dialect spark OPTIONS`` prints."""
    path = tmp_path / "log.recodings.json"
    recodings.save(log, path)
    capsys.readouterr()
    assert main(["sql", str(path), "--dialect", "spark", *options]) == 0
    return capsys.readouterr().out


def collect(frame) -> pd.DataFrame:
    """A Spark result as pandas, through plain rows (NULL becomes None)."""
    return pd.DataFrame([tuple(r) for r in frame.collect()], columns=frame.columns)


@pytest.fixture(scope="module")
def cohort(spark):
    """The training cohort as a temporary view and the fresh extract as a catalog table."""
    spark.read.csv(str(TRAINING), header=True, inferSchema=True).createOrReplaceTempView("cohort")
    spark.sql("CREATE DATABASE IF NOT EXISTS ward")
    fresh = spark.read.csv(str(FRESH), header=True, inferSchema=True)
    fresh.write.mode("overwrite").saveAsTable("ward.cohort_2026")
    yield spark
    spark.sql("DROP DATABASE ward CASCADE")
    spark.catalog.dropTempView("cohort")


def test_select_equals_python_replay_on_the_training_data(cohort, tmp_path, capsys):
    log = every_kind_log()
    text = printed_sql(log, tmp_path, capsys, "--table", "cohort")
    database = collect(cohort.sql(text)).sort_values("record_id").reset_index(drop=True)
    python = recodings.apply_to_frame(log, read_table(TRAINING)).sort_values("record_id")
    assert len(database) == len(python) == 5000
    assert list(database.columns) == list(python.columns)
    assert_same_outputs(python.reset_index(drop=True), database, output_columns(log))


def test_view_over_a_catalog_table_equals_python_replay(cohort, tmp_path, capsys):
    # A permanent view, as printed; Spark refuses one over a temporary view, hence the table.
    # Spark's own session catalog takes only letters, digits and _ in table and view names.
    log = every_kind_log().without("albumin_g_l")
    text = printed_sql(
        log, tmp_path, capsys, "--table", "ward.cohort_2026", "--view", "ward.Recoded_2026"
    )
    assert "CREATE OR REPLACE VIEW `ward`.`Recoded_2026` AS" in text
    cohort.sql(text)
    cohort.sql(text)  # re-running the same statement replaces the view
    database = collect(cohort.sql("SELECT * FROM ward.recoded_2026 ORDER BY record_id"))
    python = recodings.apply_to_frame(log, read_table(FRESH)).sort_values("record_id")
    assert list(database.columns) == list(python.columns)
    assert_same_outputs(python.reset_index(drop=True), database, output_columns(log))


def test_cut_points_knots_clip_bounds_and_stored_nan_and_infinity(cohort, tmp_path, capsys):
    # Spark keeps NaN and ±infinity as double values; replay counts them as missing, like NULL.
    log = every_kind_log()
    values = edge_values(log) + [None, math.nan, math.inf, -math.inf]
    columns = [column for column, _, _ in EVERY_KIND]
    schema = ", ".join(["`row` BIGINT"] + [f"`{c}` DOUBLE" for c in columns])
    rows = [(i, *([v] * len(columns))) for i, v in enumerate(values)]
    cohort.createDataFrame(rows, schema).createOrReplaceTempView("edges")
    text = printed_sql(log, tmp_path, capsys, "--table", "edges")
    database = collect(cohort.sql(text)).sort_values("row").reset_index(drop=True)
    frame = pd.DataFrame(
        {
            "row": range(len(values)),
            **{c: [math.nan if v is None else v for v in values] for c in columns},
        }
    )
    python = recodings.apply_to_frame(log, frame)
    assert_same_outputs(python, database, output_columns(log))
    assert_missing_rows(database.iloc[-4:], log)  # filled where the log says so
    assert database["weight_change_kg__log"].isna().sum() > 4  # non-positive shifted x


def test_odd_column_names_are_quoted_safely(cohort, tmp_path, capsys):
    odd = ['Body "mass"', "wt-change (kg)", "select", "a`b", "Ümlaut", "MixedCase"]
    decisions, taken = [], set()
    for name in odd:
        d = Decision.make(name, make_recoding("hinge", {"knot": 1.0}), (0, 3), taken=taken)
        taken |= set(d.outputs)
        decisions.append(d)
    log = RecodingLog(OUTCOME, 1, SourceInfo("t.csv", 3, "0" * 64), tuple(decisions))
    values = [0.5, 2.0, None]
    schema = ", ".join(["id BIGINT"] + [DIALECTS["spark"].identifier(n) + " DOUBLE" for n in odd])
    rows = [(i, *([v] * len(odd))) for i, v in enumerate(values)]
    cohort.createDataFrame(rows, schema).createOrReplaceTempView("odd_rows")
    cohort.sql("CREATE OR REPLACE TEMPORARY VIEW `odd ``frame``` AS SELECT * FROM odd_rows")
    text = printed_sql(log, tmp_path, capsys, "--table", "odd `frame`")
    database = collect(cohort.sql(text)).sort_values("id").reset_index(drop=True)
    frame = pd.DataFrame({"id": [0, 1, 2], **{n: [0.5, 2.0, math.nan] for n in odd}})
    python = recodings.apply_to_frame(log, frame)
    assert list(database.columns) == list(python.columns)
    assert_same_outputs(python, database, output_columns(log))


def test_a_backtick_in_a_view_name_is_refused_because_spark_refuses_it(cohort, tmp_path):
    # Spark itself cannot create such a view, however the name is quoted ...
    with pytest.raises(Exception, match="INVALID_ATTRIBUTE_NAME_SYNTAX"):
        cohort.sql("CREATE OR REPLACE VIEW ward.`re``coded` AS SELECT 1 AS a")
    # ... so bendwise says so at once, exit 2, instead of printing a statement that fails.
    path = tmp_path / "log.recodings.json"
    recodings.save(every_kind_log(), path)
    done = run_cli("sql", str(path), "--dialect", "spark", "--view", "ward.re`coded")
    assert done.returncode == 2 and done.stdout == ""
    assert "cannot hold '`' in a view name" in done.stderr


def test_missing_fill_and_indicator_for_null_nan_and_infinity(cohort, tmp_path, capsys):
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
    x = [1.0, math.nan, -math.inf, None, 3.0]
    z = [None, math.inf, 2.0, math.nan, -math.inf]
    rows = [(i, a, b) for i, (a, b) in enumerate(zip(x, z, strict=True))]
    cohort.createDataFrame(rows, "id BIGINT, x DOUBLE, z DOUBLE").createOrReplaceTempView("filled")
    text = printed_sql(log, tmp_path, capsys, "--table", "filled")
    database = collect(cohort.sql(text)).sort_values("id").reset_index(drop=True)
    frame = pd.DataFrame(
        {
            "x": [math.nan if v is None else v for v in x],
            "z": [math.nan if v is None else v for v in z],
        }
    )
    python = recodings.apply_to_frame(log, frame)
    assert_same_outputs(python, database, output_columns(log))
    assert database["x__missing"].tolist() == [0.0, 1.0, 1.0, 1.0, 0.0]
    assert not database[output_columns(log)].isna().to_numpy().any()

"""forms, check, report and review on ``spark:NAME`` (the local ``spark`` fixture,
127.0.0.1). The sample cohort's columns are counted per distinct value (under 10,000
rows), so every figure equals the file path's; a binned column's figures come from
percentile_approx and are held to the binning tolerance of the scan tests."""

from __future__ import annotations

import pandas as pd
import pytest
from conftest import SAMPLE
from source_cases import OUTCOME, binned_frame
from source_commands import assert_close, check_json, report_lines, run_json
from test_check import FRESH, learned_log

from tui import recodings
from tui.cli.main import main

COHORT = SAMPLE / "surgical_cohort.csv"


def _view(spark, frame: pd.DataFrame, name: str) -> None:
    spark.createDataFrame(frame.astype(object).where(frame.notna(), None)).createOrReplaceTempView(
        name
    )


@pytest.fixture(scope="module")
def views(spark, tmp_path_factory):
    _view(spark, pd.read_csv(COHORT), "cmd_cohort")
    _view(spark, pd.read_csv(FRESH), "cmd_fresh")
    folder = tmp_path_factory.mktemp("spark-cmd")
    parquet = folder / "binned.parquet"
    binned_frame(rows=10_200, seed=5).to_parquet(parquet)
    log = learned_log({"crp_mg_l": "log", "bmi": "quadratic", "height_cm": "spline"})
    recodings.save(log, folder / "log.json")
    yield {"parquet": parquet, "log": folder / "log.json"}
    for name in ("cmd_cohort", "cmd_fresh"):
        spark.catalog.dropTempView(name)


def test_forms_equal_the_file(views, capsys):
    args = ("--outcome", OUTCOME, "--column", "crp_mg_l", "--resamples", "20")
    want = run_json(capsys, "forms", str(COHORT), *args)
    assert_close(run_json(capsys, "forms", "spark:cmd_cohort", *args), want)


def test_forms_of_a_binned_column_within_the_binning_tolerance(views, capsys):
    # Tolerance as the scan of binned columns: AIC within 0.5 (benchmarks: wide_speed).
    args = ("--outcome", "y", "--column", "skewed")
    want = run_json(capsys, "forms", str(views["parquet"]), *args)
    got = run_json(capsys, "forms", f"spark:{views['parquet']}", *args)
    assert [r["kind"] for r in got] == [r["kind"] for r in want]
    for a, b in zip(got, want, strict=True):
        if isinstance(b.get("aic"), float):
            assert a["aic"] == pytest.approx(b["aic"], abs=0.5), a["form"]


def test_check_equals_the_file(views, capsys):
    want = check_json(capsys, views["log"], str(FRESH))
    assert_close(check_json(capsys, views["log"], "spark:cmd_fresh"), want, tol=1e-7)


def test_report_equals_the_file(views, tmp_path):
    want, got = tmp_path / "file.md", tmp_path / "spark.md"
    log = str(views["log"])
    assert main(["report", log, "--data", str(COHORT), "--output", str(want)]) == 0
    assert main(["report", log, "--data", "spark:cmd_cohort", "--output", str(got)]) == 0
    assert report_lines(got) == report_lines(want)


def test_review_opens_on_spark_and_equals_the_file(views, tmp_path):
    from source_review import review_matches_file

    from tui.intake.sources import open_source

    review_matches_file(open_source("spark:cmd_cohort"), OUTCOME, COHORT, tmp_path)
    engine = recodings.load(tmp_path / "source.recodings.json").source.engine
    assert (engine.engine, engine.table) == ("spark", "cmd_cohort")

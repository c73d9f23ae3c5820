"""Scanning ``spark:NAME`` where it lives (the shared local ``spark`` fixture, 127.0.0.1):
a catalog view and a Parquet path. Columns counted per distinct value are exact, so the
sample cohort's scan equals the file scan to 1e-9. Binned columns take their cuts and grid
from percentile_approx; its error is measured here against numpy."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from conftest import SAMPLE
from source_cases import OUTCOME, assert_same_scan, binned_frame, scan_json

from tui.engine.pushed import as_reduced, bin_plan
from tui.engine.scan import rank, scan_reduced
from tui.intake.sources.spark_source import ACCURACY, SparkSource

COHORT = SAMPLE / "surgical_cohort.csv"


@pytest.fixture(scope="module")
def views(spark, tmp_path_factory):
    folder = tmp_path_factory.mktemp("spark-sources")
    frame = pd.read_csv(COHORT)
    spark.createDataFrame(frame.astype(object).where(frame.notna(), None)).createOrReplaceTempView(
        "cohort_source"
    )
    parquet = folder / "binned.parquet"
    binned_frame(rows=10_200, seed=5).to_parquet(parquet)
    yield {"parquet": parquet}
    spark.catalog.dropTempView("cohort_source")


def test_catalog_view_prints_the_file_scan(views, capsys):
    want = scan_json(capsys, str(COHORT), "--outcome", OUTCOME)
    got = scan_json(capsys, "spark:cohort_source", "--outcome", OUTCOME)
    assert_same_scan(got, want)


def test_parquet_path_binned_columns_within_the_quantile_error(views, capsys):
    path = views["parquet"]
    want = {r["column"]: r for r in scan_json(capsys, str(path), "--outcome", "y")}
    source = SparkSource(str(path))
    outcome = source.code_outcome("y", None)
    names = ["curved", "skewed", "tied", "whole", "flag"]
    pushed, _ = source.reduce(outcome, names, bin_plan())
    got = {
        r["column"]: r
        for r in (
            s.as_record() for s in rank(scan_reduced(p.name, as_reduced(p))[0] for p in pushed)
        )
    }
    for name in ("whole", "flag"):  # at most 4,000 values, 10,200 rows: exact per value
        assert_same_scan([got[name]], [want[name]])
    # Measured error of percentile_approx: ranks within n / ACCURACY rows of numpy's
    # order statistics (Spark SQL reference), here under one row.
    frame = pd.read_parquet(path)
    for column in pushed[:2]:
        assert not column.exact
        xs = np.sort(frame[column.name].to_numpy())
        exact = np.quantile(xs, np.linspace(0, 1, column.grid.size), method="inverted_cdf")
        rank_error = np.abs(np.searchsorted(xs, column.grid) - np.searchsorted(xs, exact))
        assert rank_error.max() <= max(1, xs.size // ACCURACY)
    for name in ("curved", "skewed", "tied"):
        assert got[name]["best_form"] == want[name]["best_form"]
        assert got[name]["score"] == pytest.approx(want[name]["score"], rel=0.02)

"""DuckDB's approximate path for large inputs (``sketch_pass.py``), forced on a mid-size
invented input by lowering its row threshold and leaving out the lattice pass (which takes
most columns first, tests/test_duckdb_lattice_pass.py). Reference: the file scan of the same rows
(numpy/pandas path, exact bins). Tolerance, as documented in the sources notes: every
score within 2% relative or 0.5 absolute, the same ranking; bin counts exact."""

from __future__ import annotations

import math

import numpy as np
import pytest
from source_cases import binned_frame, scan_json

import tui.intake.sources.duckdb_source as duckdb_source
import tui.intake.sources.lattice_pass as lattice_pass
from tui.engine.pushed import bin_plan
from tui.intake.sources.duckdb_source import open_file_through_duckdb


@pytest.fixture(scope="module")
def mid_parquet(tmp_path_factory):
    path = tmp_path_factory.mktemp("sketch") / "mid.parquet"
    binned_frame(rows=100_000, seed=11).to_parquet(path)
    return path


def test_sketched_scan_is_within_tolerance_of_the_file_scan(mid_parquet, monkeypatch, capsys):
    want = scan_json(capsys, str(mid_parquet), "--outcome", "y")
    monkeypatch.setattr(duckdb_source, "SKETCH_FROM_ROWS", 50_000)
    monkeypatch.setattr(lattice_pass, "reduce_binned", lambda *a, **k: {})
    got = scan_json(capsys, str(mid_parquet), "--outcome", "y", "--engine", "duckdb")
    assert [r["column"] for r in got] == [r["column"] for r in want]
    for a, b in zip(got, want, strict=True):
        assert a["n"] == b["n"] and a["events"] == b["events"]
        if b["score"] is None:  # a column without a score has none either way
            assert a["score"] is None
            continue
        assert math.isclose(a["score"], b["score"], rel_tol=0.02, abs_tol=0.5), a["column"]


def test_sketch_path_is_taken_and_counts_every_row(mid_parquet):
    source = open_file_through_duckdb(str(mid_parquet))
    source._reduction.sketch_from = 50_000
    source._reduction.arrays = None  # no lattice pass
    sent: list[str] = []
    run = source._reduction.run
    source._reduction.run = lambda sql: sent.append(sql) or run(sql)
    try:
        names = ["curved", "skewed", "tied"]
        pushed, _ = source.reduce(source.code_outcome("y", None), names, bin_plan())
    finally:
        source.close()
    assert sum("approx_quantile" in s for s in sent) == 1  # one sketch statement (3 columns)
    assert sum("histogram(" in s for s in sent) == 1  # one counting statement
    assert not any("ASOF" in s or "row_number" in s for s in sent)  # no exact passes
    frame = binned_frame(rows=100_000, seed=11)
    for p in pushed:
        assert not p.exact
        finite = frame[p.name][np.isfinite(frame[p.name])]
        assert p.trials.sum() == finite.size == p.present  # bins hold every finite row
        events = frame.loc[np.isfinite(frame[p.name]), "y"].sum()
        assert p.events.sum() == events
        assert np.all(np.diff(p.x) > 0) and p.x[0] >= p.low and p.x[-1] <= p.high
        assert p.low == finite.min() and p.high == finite.max()

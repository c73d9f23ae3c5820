"""DuckDB's lattice pass for large inputs (``lattice_pass.py``), forced on a mid-size
invented input by lowering the row threshold. References: the invented rows themselves
(every finite row and event counted once), numpy's quantiles of those rows, and the file
scan of the same rows (numpy path, exact bins): every score within 2% relative or 0.5
absolute, the same ranking, as the sources notes promise for the approximate paths."""

from __future__ import annotations

import math

import numpy as np
import pytest
from source_cases import binned_frame, scan_json

import tui.intake.sources.duckdb_source as duckdb_source
from tui import lattice_bins
from tui.engine.pushed import bin_plan
from tui.intake.sources.duckdb_source import open_file_through_duckdb

ROWS = 100_000


@pytest.fixture(scope="module")
def mid_parquet(tmp_path_factory):
    path = tmp_path_factory.mktemp("lattice") / "mid.parquet"
    frame = binned_frame(rows=ROWS, seed=11)
    frame["long_tail"] = np.random.default_rng(3).pareto(1.0, ROWS)
    frame.to_parquet(path)
    return path


def _reduced(path, names):
    source = open_file_through_duckdb(str(path))
    source._reduction.sketch_from = 50_000
    sent: list[str] = []
    run, arrays = source._reduction.run, source._reduction.arrays
    source._reduction.run = lambda sql: sent.append(sql) or run(sql)
    source._reduction.arrays = lambda sql: sent.append(sql) or arrays(sql)
    try:
        pushed, _ = source.reduce(source.code_outcome("y", None), names, bin_plan())
    finally:
        source.close()
    return {p.name: p for p in pushed}, sent


def test_lattice_scan_is_within_tolerance_of_the_file_scan(mid_parquet, monkeypatch, capsys):
    want = scan_json(capsys, str(mid_parquet), "--outcome", "y")
    monkeypatch.setattr(duckdb_source, "SKETCH_FROM_ROWS", 50_000)
    got = scan_json(capsys, str(mid_parquet), "--outcome", "y", "--engine", "duckdb")
    assert [r["column"] for r in got] == [r["column"] for r in want]
    for a, b in zip(got, want, strict=True):
        assert a["n"] == b["n"] and a["events"] == b["events"]
        if b["score"] is None:
            assert a["score"] is None
            continue
        assert math.isclose(a["score"], b["score"], rel_tol=0.02, abs_tol=0.5), a["column"]


def test_lattice_counts_every_row_once_and_its_quantiles_are_within_a_cell(mid_parquet):
    names = ["curved", "skewed", "tied"]
    pushed, sent = _reduced(mid_parquet, names)
    assert sum("GROUP BY k__" in s for s in sent) == len(names)  # one lattice statement each
    assert not any("approx_quantile" in s or "histogram(" in s for s in sent)  # no sketch
    frame = binned_frame(rows=ROWS, seed=11)
    probs = np.linspace(0.0, 1.0, 2001)
    for name in names:
        p = pushed[name]
        finite = frame[name][np.isfinite(frame[name])].to_numpy()
        assert not p.exact
        assert p.trials.sum() == finite.size == p.present
        assert p.events.sum() == frame.loc[np.isfinite(frame[name]), "y"].sum()
        assert np.all(np.diff(p.x) > 0) and p.x[0] == finite.min() and p.x[-1] == finite.max()
        width = (finite.max() - finite.min()) / lattice_bins.CELLS
        assert np.abs(p.grid - np.quantile(finite, probs)).max() <= width * (1 + 1e-9)


def test_a_very_long_tail_is_left_to_the_sketch_pass(mid_parquet):
    pushed, sent = _reduced(mid_parquet, ["long_tail", "curved"])
    assert sum("GROUP BY k__" in s for s in sent) == 2  # both tried on the lattice
    assert sum("approx_quantile" in s for s in sent) == 1  # the long tail sketched
    assert pushed["long_tail"].trials.sum() == ROWS

"""End to end: ``bendwise scan`` on the synthetic surgical cohort recovers the planted shapes."""

import json

import pytest
from conftest import SAMPLE, run_cli

OUTCOME = "wound_infection_30d"
REQUIRED_KEYS = {
    "column", "n", "missing", "events", "distinct", "score", "df",
    "p_value", "q_value", "shape", "best_form", "delta_aic", "flags",
}  # fmt: skip
NONLINEAR = {"u-shape", "threshold", "log", "saturating", "spike-at-zero"}


@pytest.fixture(scope="module")
def truth():
    return json.loads((SAMPLE / "planted_shapes.json").read_text())["columns"]


@pytest.fixture(scope="module")
def scan_json():
    out = run_cli(
        "scan", str(SAMPLE / "surgical_cohort.csv"), "--outcome", OUTCOME, "--format", "json"
    )
    assert out.returncode == 0, out.stderr
    return json.loads(out.stdout)


def test_every_numeric_column_but_the_outcome_is_listed(scan_json, truth):
    listed = {r["column"] for r in scan_json}
    assert listed == set(truth) - {OUTCOME}  # text columns too: nothing silently dropped
    text = [r for r in scan_json if truth[r["column"]]["shape"] == "text"]
    assert text and all(r["flags"] == ["not-numeric"] and r["score"] is None for r in text)
    for record in scan_json:
        assert set(record) >= REQUIRED_KEYS


def test_planted_bends_rank_first_with_small_q(scan_json, truth):
    bent = {c for c, t in truth.items() if t["shape"] in NONLINEAR}
    top = [r["column"] for r in scan_json[: len(bent)]]
    assert set(top) == bent
    for r in scan_json[: len(bent)]:
        assert r["q_value"] < 0.01 and r["shape"] != "linear"


def test_linear_and_no_effect_columns_are_not_flagged_after_fdr(scan_json, truth):
    for r in scan_json:
        if truth[r["column"]]["shape"] in {"linear", "none"}:
            assert r["q_value"] >= 0.05, r
            assert r["shape"] == "linear"


def test_shape_hints_for_clear_cases(scan_json):
    by = {r["column"]: r for r in scan_json}
    assert by["bmi"]["shape"] == "u-shape"
    assert by["sodium_mmol_l"]["shape"] == "u-shape"
    assert by["hba1c_pct"]["shape"] == "threshold"


def test_flags_on_the_awkward_columns(scan_json, truth):
    by = {r["column"]: r for r in scan_json}
    expect = {"constant": "constant", "binary": "binary", "identifier": "identifier-like",
              "mostly-missing": "many-missing"}  # fmt: skip
    for column, t in truth.items():
        if t["shape"] in expect:
            assert expect[t["shape"]] in by[column]["flags"], column
    constant = next(c for c, t in truth.items() if t["shape"] == "constant")
    assert by[constant]["score"] is None


def test_table_lists_the_text_column_once_as_a_not_numeric_row(truth):
    out = run_cli("scan", str(SAMPLE / "surgical_cohort.csv"), "--outcome", OUTCOME)
    assert out.returncode == 0, out.stderr
    text_cols = [c for c, t in truth.items() if t["shape"] == "text"]
    assert text_cols
    for text_col in text_cols:
        mentions = [line for line in out.stdout.splitlines() if text_col in line.split()]
        assert len(mentions) == 1, mentions  # once, as its own row (was also "not scanned")
        assert mentions[0].split()[-1] == "not-numeric"
    assert "not scanned" not in out.stdout
    assert "Caution:" in out.stdout
    assert out.stderr == ""  # no progress bar when stderr is not a terminal


def test_csv_output_to_file(tmp_path):
    target = tmp_path / "scan.csv"
    out = run_cli("scan", str(SAMPLE / "surgical_cohort.csv"), "--outcome", OUTCOME,
                  "--format", "csv", "--output", str(target), "--exclude", "record_id")  # fmt: skip
    assert out.returncode == 0, out.stderr
    lines = target.read_text().splitlines()
    assert lines[0].startswith("column,n,missing,events,distinct,score")
    assert not any(line.startswith("record_id,") for line in lines)

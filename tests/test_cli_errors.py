"""Bad input: exit 2, one clear line on stderr, no traceback, nothing written."""

import pandas as pd
import pytest
from conftest import SAMPLE, run_cli

COHORT = str(SAMPLE / "surgical_cohort.csv")


@pytest.fixture
def small(tmp_path):
    frame = pd.DataFrame({
        "x": [1.0, 2.0, 3.0, 4.0, 5.0, 6.0],
        "status": ["alive", "dead", "alive", "alive", "dead", "alive"],
        "one": [1, 1, 1, 1, 1, 1],
        "three": ["a", "b", "c", "a", "b", "c"],
    })  # fmt: skip
    path = tmp_path / "small.csv"
    frame.to_csv(path, index=False)
    return path


def _one_line_error(out, *fragments):
    assert out.returncode == 2, (out.returncode, out.stderr)
    lines = out.stderr.strip().splitlines()
    assert len(lines) == 1, out.stderr
    assert "Traceback" not in out.stderr
    assert lines[0].startswith("bendwise: ")
    for fragment in fragments:
        assert fragment in lines[0], lines[0]


def test_outcome_column_absent_suggests_names():
    out = run_cli("scan", COHORT, "--outcome", "wound_infection_3d")
    _one_line_error(out, "wound_infection_3d", "wound_infection_30d")


def test_one_level_outcome(small):
    _one_line_error(run_cli("scan", str(small), "--outcome", "one"), "one")


def test_more_than_two_levels(small):
    _one_line_error(run_cli("scan", str(small), "--outcome", "three"), "three")


def test_text_outcome_needs_event(small):
    _one_line_error(run_cli("scan", str(small), "--outcome", "status"), "--event")


def test_text_outcome_with_event_runs(small):
    out = run_cli("scan", str(small), "--outcome", "status", "--event", "dead", "--format", "json")
    assert out.returncode == 0, out.stderr


def test_unsupported_extension(tmp_path):
    path = tmp_path / "data.xlsx"
    path.write_bytes(b"not really")
    _one_line_error(run_cli("scan", str(path), "--outcome", "y"), ".csv", ".parquet")


def test_missing_file(tmp_path):
    _one_line_error(run_cli("scan", str(tmp_path / "nope.csv"), "--outcome", "y"), "nope.csv")


def test_unknown_exclude():
    out = run_cli("scan", COHORT, "--outcome", "wound_infection_30d", "--exclude", "bmx")
    _one_line_error(out, "bmx")


@pytest.mark.parametrize(
    "option, value", [("--groups", "3"), ("--knots", "9"), ("--format", "xml")]
)
def test_bad_option_values(option, value):
    out = run_cli("scan", COHORT, "--outcome", "wound_infection_30d", option, value)
    _one_line_error(out, option.lstrip("-"))


def test_refuses_to_write_over_the_data(small):
    before = small.read_bytes()
    out = run_cli(
        "scan", str(small), "--outcome", "status", "--event", "dead", "--output", str(small)
    )
    _one_line_error(out, "overwrite")
    assert small.read_bytes() == before


@pytest.mark.parametrize(
    "options, words",
    [
        (["--adjust", "bmx"], "bmx"),
        (["--adjust", "record_id,wound_infection_30d"], "outcome"),
        (["--weight", "weight_change_kg"], "negative"),
        (["--weight", "ward"], "not numeric"),
        (["--weight", "bmi", "--adjust", "bmi"], "both"),
        (["--adjust", "age_years", "--weight-kind", "sampling"], "weight-kind"),
    ],
)
def test_bad_adjustment_or_weights(options, words):
    out = run_cli("scan", COHORT, "--outcome", "wound_infection_30d", *options)
    _one_line_error(out, words)


def test_text_covariate_with_many_levels(tmp_path):
    frame = pd.DataFrame({
        "x": range(40), "y": [0, 1] * 20, "site": [f"s{i}" for i in range(40)],
    })  # fmt: skip
    path = tmp_path / "sites.csv"
    frame.to_csv(path, index=False)
    out = run_cli("scan", str(path), "--outcome", "y", "--adjust", "site")
    _one_line_error(out, "site", "levels")


def test_unknown_weight_column_is_named_as_such():
    out = run_cli("scan", COHORT, "--outcome", "wound_infection_30d", "--weight", "nosuch")
    _one_line_error(out, "weight column", "nosuch")


def test_constant_covariate_is_refused():
    out = run_cli(
        "scan", COHORT, "--outcome", "wound_infection_30d", "--adjust", "antibiotic_dose_g"
    )
    _one_line_error(out, "antibiotic_dose_g", "constant")


def test_excluded_numeric_column_can_still_adjust():
    out = run_cli("scan", COHORT, "--outcome", "wound_infection_30d", "--exclude", "age_years",
                  "--adjust", "age_years", "--format", "json")  # fmt: skip
    assert out.returncode == 0, out.stderr
    assert '"age_years"' in out.stdout  # listed in adjusted_for, not scanned

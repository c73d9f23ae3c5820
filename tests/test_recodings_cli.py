"""``bendwise replay`` and ``bendwise sql``: results, refusals (exit 2, one line), nothing lost."""

from __future__ import annotations

import hashlib
import shutil

import numpy as np
import pandas as pd
import pytest
from conftest import run_cli
from recodings_cases import FRESH, TRAINING, every_kind_log, output_columns

from tui import atomic, recodings
from tui.cli.main import main
from tui.engine.forms import make_recoding
from tui.intake import read_table
from tui.recodings import Decision


def sha(path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.fixture
def log_file(tmp_path):
    path = tmp_path / "cohort.recodings.json"
    recodings.save(every_kind_log(), path)
    return path


@pytest.fixture
def fresh_log_file(tmp_path):
    """The log without the column the fresh extract renamed."""
    path = tmp_path / "fresh.recodings.json"
    recodings.save(every_kind_log().without("albumin_g_l"), path)
    return path


def one_line_refusal(done) -> str:
    assert done.returncode == 2, done.stderr
    assert done.stderr.startswith("bendwise: ") and done.stderr.count("\n") == 1, done.stderr
    assert "Traceback" not in done.stderr
    return done.stderr


def test_replay_writes_every_input_column_and_every_output(tmp_path, log_file):
    out = tmp_path / "replayed.csv"
    before = sha(TRAINING)
    done = run_cli("replay", str(log_file), str(TRAINING), "--output", str(out))
    assert done.returncode == 0, done.stderr
    assert "Traceback" not in done.stderr and f"wrote {out}" in done.stderr
    written = pd.read_csv(out)
    training = read_table(TRAINING)
    log = every_kind_log()
    assert list(written.columns) == list(training.columns) + output_columns(log)
    expected = recodings.apply_to_frame(log, training)
    for name in output_columns(log):
        # Floats are written so that they read back as the same doubles.
        np.testing.assert_array_equal(written[name].to_numpy(), expected[name].to_numpy())
    assert sha(TRAINING) == before


@pytest.mark.parametrize("suffix", [".parquet", ".feather", ".tsv"])
def test_replay_writes_the_format_its_output_name_asks_for(tmp_path, log_file, suffix, capsys):
    out = tmp_path / f"replayed{suffix}"
    assert main(["replay", str(log_file), str(TRAINING), "--output", str(out)]) == 0
    written = read_table(out)
    expected = recodings.apply_to_frame(every_kind_log(), read_table(TRAINING))
    for name in output_columns(every_kind_log()):
        np.testing.assert_array_equal(written[name].to_numpy(), expected[name].to_numpy())


def test_out_of_range_values_warn_per_column_with_count_and_side(tmp_path, fresh_log_file):
    out = tmp_path / "fresh_replayed.csv"
    done = run_cli("replay", str(fresh_log_file), str(FRESH), "--output", str(out))
    assert done.returncode == 0, done.stderr
    warnings = [line for line in done.stderr.splitlines() if "warning" in line]
    # sample_data/README.md: six rows beyond the development range in each of three columns.
    assert len(warnings) == 3
    assert any("crp_mg_l: 6 values above" in w for w in warnings)
    assert any("operation_minutes: 6 values above" in w for w in warnings)
    assert any("bmi: 6 values below" in w for w in warnings)
    assert out.exists()


def test_strict_range_refuses_and_writes_nothing(tmp_path, fresh_log_file):
    out = tmp_path / "fresh_replayed.csv"
    args = ("replay", str(fresh_log_file), str(FRESH), "--output", str(out), "--strict-range")
    message = one_line_refusal(run_cli(*args))
    for column in ("crp_mg_l", "operation_minutes", "bmi"):
        assert column in message
    assert not out.exists()


def test_missing_and_text_columns_are_all_named_and_nothing_is_written(tmp_path):
    log = every_kind_log()
    ward = Decision.make("ward", make_recoding("linear", {}), (0, 1), taken=log.output_names())
    path = tmp_path / "bad.recodings.json"
    recodings.save(log.with_decision(ward), path)
    out = tmp_path / "fresh_replayed.csv"
    message = one_line_refusal(run_cli("replay", str(path), str(FRESH), "--output", str(out)))
    assert "'albumin_g_l' (closest: 'serum_albumin_g_l')" in message
    assert "not numeric: 'ward'" in message
    assert str(FRESH) in message
    assert not out.exists()


def test_replay_never_writes_over_its_data(tmp_path, log_file):
    data = tmp_path / "cohort.csv"
    shutil.copy(TRAINING, data)
    before = sha(data)
    for spelling in (data, tmp_path / "sub" / ".." / "cohort.csv"):
        (tmp_path / "sub").mkdir(exist_ok=True)
        args = ("replay", str(log_file), str(data), "--output", str(spelling), "--force")
        assert "data file" in one_line_refusal(run_cli(*args))
    assert sha(data) == before


def test_replay_never_writes_over_its_log(tmp_path, log_file):
    before = sha(log_file)
    args = ("replay", str(log_file), str(TRAINING), "--output", str(log_file), "--force")
    assert "recoding log" in one_line_refusal(run_cli(*args))
    assert sha(log_file) == before


def test_existing_output_needs_force(tmp_path, log_file, capsys):
    out = tmp_path / "replayed.csv"
    out.write_text("keep me\n")
    assert main(["replay", str(log_file), str(TRAINING), "--output", str(out)]) == 2
    err = capsys.readouterr().err
    assert "exists; add --force" in err and err.count("\n") == 1
    assert out.read_text() == "keep me\n"
    assert main(["replay", str(log_file), str(TRAINING), "--output", str(out), "--force"]) == 0
    assert "age_years__lin" in out.read_text().splitlines()[0]


def test_failed_write_leaves_the_previous_output_intact(tmp_path, log_file, monkeypatch, capsys):
    out = tmp_path / "replayed.csv"
    out.write_text("previous version\n")

    def crash(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(atomic.os, "replace", crash)
    code = main(["replay", str(log_file), str(TRAINING), "--output", str(out), "--force"])
    monkeypatch.undo()
    assert code == 2
    assert "No space left on device" in capsys.readouterr().err
    assert out.read_text() == "previous version\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(
        ["replayed.csv", "cohort.recodings.json"]
    )


@pytest.mark.parametrize(
    "output, words",
    [
        ("replayed.xlsx", "output formats"),
        ("replayed", "no file extension"),
        ("missing_folder/replayed.csv", "does not exist"),
    ],
)
def test_unusable_output_paths_are_refused_before_reading(tmp_path, log_file, output, words):
    done = run_cli("replay", str(log_file), str(TRAINING), "--output", str(tmp_path / output))
    assert words in one_line_refusal(done)


def test_unreadable_data_and_missing_arguments_give_one_line(tmp_path, log_file):
    out = str(tmp_path / "o.csv")
    one_line_refusal(run_cli("replay", str(log_file), str(tmp_path / "none.csv"), "--output", out))
    one_line_refusal(run_cli("replay", str(log_file), str(TRAINING)))
    one_line_refusal(run_cli("replay", str(tmp_path / "none.json"), str(TRAINING), "--output", out))


@pytest.mark.parametrize("dialect", ["duckdb", "postgres", "spark"])
def test_sql_prints_the_select_for_the_chosen_dialect(log_file, dialect, capsys):
    assert main(["sql", str(log_file), "--dialect", dialect]) == 0
    assert capsys.readouterr().out == recodings.to_sql(every_kind_log(), dialect)


def test_sql_default_dialect_and_named_table(log_file, capsys):
    assert main(["sql", str(log_file), "--table", "ward_data.cohort_2026"]) == 0
    text = capsys.readouterr().out
    assert "-- dialect: duckdb" in text
    assert text.rstrip().endswith('FROM "ward_data"."cohort_2026"')


@pytest.mark.parametrize("dialect", ["duckdb", "postgres", "spark"])
def test_sql_view_prints_the_create_view_statement(log_file, dialect, capsys):
    assert main(["sql", str(log_file), "--dialect", dialect, "--view", "recoded"]) == 0
    expected = recodings.to_sql(every_kind_log(), dialect, view="recoded")
    assert capsys.readouterr().out == expected
    assert "CREATE OR REPLACE VIEW" in expected and expected.endswith(";\n")


@pytest.mark.parametrize(
    "args, words",
    [
        (["--dialect", "oracle"], "invalid choice"),
        (["--table", "a..b"], "table name"),
        (["--table", ""], "table name"),
        (["--view", "a..b"], "view name"),
        (["--view", "surgical_cohort"], "is the table it reads"),
        (["--dialect", "spark", "--view", "a`b"], "cannot hold"),
    ],
)
def test_sql_bad_options_give_one_line(log_file, args, words):
    done = run_cli("sql", str(log_file), *args)
    assert words in one_line_refusal(done)
    assert done.stdout == ""

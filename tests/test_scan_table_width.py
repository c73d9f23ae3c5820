"""``bendwise scan``'s table fits a terminal's width by dropping its least important fields
in the stated order; a file, a pipe, CSV and JSON keep every field."""

from __future__ import annotations

from conftest import SAMPLE, run_cli

from tui.cli.scan_output import ELIDED_FIRST, as_table
from tui.engine.runner import scan_columns
from tui.engine.scan import rank
from tui.intake.dataset import open_dataset

COHORT = SAMPLE / "surgical_cohort.csv"


def _scans():
    data = open_dataset(COHORT, "wound_infection_30d")
    columns = data.columns[:6]
    return rank(scan_columns(columns, data.raw_values, data.outcome.y, workers=1))


def test_the_table_fits_80_and_120_columns_dropping_fields_in_the_stated_order():
    scans = _scans()
    full = as_table(scans)
    header = full.splitlines()[0].split()
    assert "miss" in header and "p" in header
    for width in (80, 120):
        text = as_table(scans, width=width)
        assert max(len(line) for line in text.splitlines()) <= width
        shown = text.splitlines()[0]
        for must in ("column", "score", "q", "best form"):
            assert must in shown
        dropped = [f for f in ELIDED_FIRST if f" {f} " not in f" {shown} "]
        # What is gone is a leading run of the stated order.
        assert dropped == list(ELIDED_FIRST[: len(dropped)])
    assert as_table(scans, width=500) == full


def test_a_pipe_or_a_file_gets_every_field(tmp_path):
    done = run_cli("scan", str(COHORT), "--outcome", "wound_infection_30d")
    assert done.returncode == 0
    widest = max(len(line) for line in done.stdout.splitlines())
    assert widest > 120 and "miss" in done.stdout.splitlines()[0]
    help_text = run_cli("scan", "--help").stdout
    assert "dropping fields in this order" in " ".join(help_text.split())

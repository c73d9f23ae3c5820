"""The report's missing-value part: the group under the small-cell rule, how the log codes
a missing x, and the fill comparison on every row with an outcome."""

from __future__ import annotations

import numpy as np
import pytest
from conftest import SAMPLE

from tui.engine.forms import MissingFill, make_recoding
from tui.engine.missing_group import compare_fills, missing_group
from tui.intake.dataset import open_dataset
from tui.recodings.model import Decision, RecodingLog, SourceInfo
from tui.report import build_report, render_html, render_markdown

COHORT = SAMPLE / "surgical_cohort.csv"


@pytest.fixture(scope="module")
def data():
    return open_dataset(COHORT, "wound_infection_30d")


def _log(*decisions: Decision) -> RecodingLog:
    return RecodingLog("wound_infection_30d", 1, SourceInfo(COHORT.name, 5000, "0" * 64), decisions)


def test_a_filled_decision_says_how_missing_x_is_coded_and_compares_on_every_row(data):
    recoding = make_recoding("linear", {}, missing=MissingFill(6.0, True))
    report = build_report(_log(Decision.make("hba1c_pct", recoding, (4.2, 13.5))), data)
    part = report.decisions[0].missing
    x, y = data.raw_values("hba1c_pct"), data.outcome.y
    group = missing_group(x, y)
    comparison = compare_fills(recoding, x, y, 6.0)
    assert part.rows == str(int(group.n)) == "188"
    assert part.logit == pytest.approx(group.logit)
    assert part.indicator_aic == pytest.approx(comparison.with_indicator.aic)
    text = render_markdown(report)
    assert "filled with 6, flagged by `hba1c_pct__missing`" in text
    assert "all 5000 rows with an outcome" in text and "4812 rows with x" in text
    assert "Sterne et al. 2009" in text
    assert "flagged by hba1c_pct__missing" in render_html(report)


def test_a_column_without_missing_values_has_no_missing_part(data):
    report = build_report(
        _log(Decision.make("age_years", make_recoding("linear", {}), (18, 95))), data
    )
    assert report.decisions[0].missing is None
    assert "Missing x:" not in render_markdown(report)


def test_a_small_missing_group_shows_its_count_as_below_the_threshold(data):
    report = build_report(
        _log(Decision.make("hba1c_pct", make_recoding("linear", {}), (4.2, 13.5))),
        data,
        min_cell=200,
    )
    part = report.decisions[0].missing
    assert part.rows == "<200" and part.logit is None and part.rate is None
    assert "rate and empirical logit withheld" in render_markdown(report)
    assert np.isfinite(part.fill)  # the training median proposed

"""Awkward columns: the scan flags them and never crashes."""

import numpy as np
import pytest

from tui.engine.compare import compare_forms
from tui.engine.counts import reduce_column
from tui.engine.scan import rank, scan_column


def _y(rng, n, p=0.3):
    return (rng.random(n) < p).astype(float)


def test_all_missing_column(rng):
    result, table = scan_column("empty", np.full(300, np.nan), _y(rng, 300))
    assert result.n == 0 and result.missing == 300 and table is None
    assert "constant" in result.flags and "many-missing" in result.flags
    assert result.score is None


def test_huge_magnitudes_score_like_the_scaled_column(rng):
    x = rng.normal(size=2000)
    y = (rng.random(2000) < 1 / (1 + np.exp(-(x**2 - 1)))).astype(float)
    small, _ = scan_column("x", x, y)
    huge, _ = scan_column("x", x * 1e200, y)
    assert huge.score == pytest.approx(small.score, rel=1e-6)
    assert huge.shape == small.shape


def test_infinities_are_missing_and_flagged(rng):
    x = rng.normal(size=500)
    x[:7] = np.inf
    x[7:9] = -np.inf
    result, _ = scan_column("x", x, _y(rng, 500))
    assert "non-finite" in result.flags
    assert result.n == 491 and result.missing == 9


def test_negative_values_get_a_shift_and_a_flag(rng):
    x = rng.normal(-5, 2, 1500)
    result, table = scan_column("x", x, _y(rng, 1500))
    assert "nonpositive" in result.flags
    log = table.row("log")
    assert log.status == "ok" and log.recoding.params["shift"] > 5


@pytest.mark.parametrize("levels", [3, 5, 8])
def test_few_distinct_values(levels, rng):
    x = rng.integers(0, levels, 2000).astype(float)
    result, table = scan_column("x", x, _y(rng, 2000))
    assert "few-values" in result.flags
    assert result.distinct == levels
    statuses = {r.label: r.status for r in table.rows}
    assert statuses["linear"] == "ok"  # every form either fits or fails softly
    assert set(statuses.values()) <= {"ok", "failed", "separation", "not-converged"}


def test_heavy_ties_merge_knots(rng):
    x = np.r_[np.zeros(1200), rng.gamma(2, 2, 800)]  # 60% exact zeros
    result, _ = scan_column("x", x, _y(rng, 2000))
    assert result.df == 1  # two knots merged at zero: 3 distinct knots, k - 2 = 1


def test_outcome_all_one_class_is_not_scored(rng):
    result, table = scan_column("x", rng.normal(size=100), np.zeros(100))
    assert result.score is None and table is None


def test_single_event_low_events_flag(rng):
    y = np.zeros(400)
    y[:12] = 1
    result, _ = scan_column("x", rng.normal(size=400), y)
    assert "low-events" in result.flags


def test_rank_handles_unscored_columns(rng):
    y = _y(rng, 300)
    columns = {"a": rng.normal(size=300), "b": np.ones(300), "c": rng.normal(size=300)}
    scans = [scan_column(name, values, y)[0] for name, values in columns.items()]
    ranked = rank(scans)
    assert ranked[-1].column == "b" and ranked[-1].q_value is None


def test_empty_counts_table_is_all_failures():
    counts = reduce_column(np.array([1.0, 1.0, 1.0]), np.array([0.0, 1.0, 0.0]))
    table = compare_forms(counts)
    assert all(r.status == "failed" for r in table.rows)
    assert table.best() is None

"""Replay in Python: the engine's own design columns, every input column kept, clear refusals."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from recodings_cases import EVERY_KIND, FRESH, OUTCOME, TRAINING, every_kind_log, output_columns

from tui import recodings
from tui.engine.counts import reduce_column
from tui.engine.forms import make_recoding
from tui.engine.forms.bands import BandsCandidate
from tui.engine.forms.base import design_matrix, fit_on_counts
from tui.engine.forms.registry import default_candidates
from tui.engine.forms.spline import SplineCandidate
from tui.intake import numeric_values, read_table
from tui.problems import InputProblem
from tui.recodings import Decision, RecodingLog, SourceInfo

# Which sample column each engine-learned candidate is tried on (shapes planted there).
ENGINE_CASES = [
    ("linear", "age_years"),
    ("log", "crp_mg_l"),
    ("log", "weight_change_kg"),  # needs a shift: values down to -11.8
    ("fp1", "blood_loss_ml"),
    ("fp2", "creatinine_umol_l"),
    ("quadratic", "bmi"),
    ("spline", "sodium_mmol_l"),
    ("hinge", "operation_minutes"),
    ("indicator", "hba1c_pct"),  # has missing values
    ("bands", "incision_length_cm"),
]


@pytest.fixture(scope="module")
def training() -> pd.DataFrame:
    return read_table(TRAINING)


def _engine_log(training: pd.DataFrame, tmp_path) -> tuple[RecodingLog, dict]:
    """Learn every candidate with the engine, keep it in a log, and read the log back."""
    y = training[OUTCOME].to_numpy(dtype=float)
    candidates = {c.kind: c for c in default_candidates()}
    extra = [("spline", "preop_stay_hours", SplineCandidate(3))]
    extra += [("spline", "temperature_c", SplineCandidate(7))]
    extra += [("bands", "glucose_mmol_l", BandsCandidate(6))]
    log = RecodingLog(OUTCOME, 1, SourceInfo(TRAINING.name, len(training), "0" * 64))
    learned = {}
    cases = [(k, col, candidates[k]) for k, col in ENGINE_CASES] + extra
    for kind, column, candidate in cases:
        x = numeric_values(training[column])
        counts = reduce_column(x, y)
        assert counts.exact  # the sample is small enough for exact counts
        recoding = candidate.learn(counts).recoding
        assert recoding.kind == kind
        decision = Decision.make(
            column, recoding, (np.nanmin(x), np.nanmax(x)), taken=log.output_names()
        )
        # One column can hold only one decision; later cases use another column.
        assert log.decision_for(column) is None
        log = log.with_decision(decision)
        learned[column] = counts
    path = tmp_path / "engine.recodings.json"
    recodings.save(log, path)
    return recodings.load(path), learned


def test_replay_reproduces_the_design_the_engine_fitted(training, tmp_path):
    log, learned = _engine_log(training, tmp_path)
    replayed = recodings.apply_to_frame(log, training)
    for decision in log.decisions:
        counts = learned[decision.column]
        engine = design_matrix(decision.recoding, counts.x)[:, 1:]
        x = numeric_values(training[decision.column])
        present = np.isfinite(x)
        at = np.searchsorted(counts.x, x[present])
        ours = replayed[list(decision.outputs)].to_numpy(dtype=float)
        np.testing.assert_allclose(ours[present], engine[at], rtol=0, atol=1e-12)
        assert np.all(np.isnan(ours[~present]))


def test_replayed_rows_give_the_engines_fit(training, tmp_path):
    # Reference library statsmodels: a row-level logistic fit of the replayed columns has the
    # coefficients and log-likelihood the engine found on its reduced counts.
    log, learned = _engine_log(training, tmp_path)
    replayed = recodings.apply_to_frame(log, training)
    y = training[OUTCOME].to_numpy(dtype=float)
    for decision in log.decisions:
        engine = fit_on_counts(decision.recoding, learned[decision.column])
        design = replayed[list(decision.outputs)].to_numpy(dtype=float)
        keep = np.all(np.isfinite(design), axis=1)
        reference = sm.Logit(y[keep], sm.add_constant(design[keep], has_constant="add")).fit(
            disp=0, method="newton", maxiter=100
        )
        assert reference.llf == pytest.approx(engine.llf, rel=1e-8), decision.column
        np.testing.assert_allclose(reference.params, engine.coef, rtol=1e-5, atol=1e-7)


def test_replay_keeps_every_input_column_and_adds_outputs_after_them(training):
    log = every_kind_log()
    replayed = recodings.apply_to_frame(log, training)
    assert list(replayed.columns) == list(training.columns) + output_columns(log)
    pd.testing.assert_frame_equal(replayed[list(training.columns)], training)
    assert all(replayed[name].dtype == np.float64 for name in output_columns(log))
    assert len(replayed) == len(training)


@pytest.mark.parametrize("column, recoding, training_range", EVERY_KIND)
def test_each_recoding_applies_its_own_numbers(training, column, recoding, training_range):
    log = every_kind_log()
    decision = log.decision_for(column)
    replayed = recodings.apply_to_frame(log, training)
    expected = recoding.apply(numeric_values(training[column]))
    np.testing.assert_array_equal(replayed[list(decision.outputs)].to_numpy(), expected)


def test_clip_limits_x_before_the_recoding():
    log = every_kind_log()
    frame = pd.DataFrame({"bmi": [10.0, 16.0, 30.0, 60.0, np.nan]})
    small = RecodingLog(log.outcome_column, 1, log.source, (log.decision_for("bmi"),))
    out = recodings.apply_to_frame(small, frame)
    np.testing.assert_array_equal(out["bmi__lin"], [16.0, 16.0, 30.0, 45.0, np.nan])
    np.testing.assert_array_equal(out["bmi__sq"], [256.0, 256.0, 900.0, 2025.0, np.nan])


def test_missing_source_columns_are_all_named_with_the_closest_name():
    fresh = read_table(FRESH)
    bad = fresh.drop(columns=["sodium_mmol_l"]).assign(crp_mg_l=lambda f: f["ward"])
    with pytest.raises(InputProblem) as problem:
        recodings.apply_to_frame(every_kind_log(), bad, "fresh.csv")
    message = str(problem.value)
    assert message.startswith("cannot replay on fresh.csv: ")
    assert "'albumin_g_l' (closest: 'serum_albumin_g_l')" in message
    assert "'sodium_mmol_l'" in message
    assert "not numeric: 'crp_mg_l'" in message


def test_a_column_named_like_an_output_is_refused(training):
    clashing = training.assign(age_years__lin=1.0)
    with pytest.raises(InputProblem, match="named like outputs: 'age_years__lin'"):
        recodings.apply_to_frame(every_kind_log(), clashing)


def test_values_beyond_the_training_range_are_counted_by_side(training):
    # sample_data/README.md: the fresh extract has six rows beyond the development range in
    # each of operation_minutes (above), crp_mg_l (above) and bmi (below), and no others.
    log = RecodingLog(OUTCOME, 1, SourceInfo(TRAINING.name, len(training), "0" * 64))
    for column, recoding, _ in EVERY_KIND:
        if column == "albumin_g_l":  # renamed in the fresh extract
            continue
        x = numeric_values(training[column])
        log = log.with_decision(Decision.make(column, recoding, (np.nanmin(x), np.nanmax(x))))
    assert recodings.range_excess(log, training) == []
    found = {e.column: e for e in recodings.range_excess(log, read_table(FRESH))}
    assert set(found) == {"operation_minutes", "crp_mg_l", "bmi"}
    assert (found["operation_minutes"].below, found["operation_minutes"].above) == (0, 6)
    assert (found["crp_mg_l"].below, found["crp_mg_l"].above) == (0, 6)
    assert (found["bmi"].below, found["bmi"].above) == (6, 0)
    assert found["bmi"].describe() == (
        "bmi: 6 values below the training range [16, 55] (lowest 14.1), "
        "limited to [16, 45] by the recoding's clip"
    )
    assert found["crp_mg_l"].describe() == (
        "crp_mg_l: 6 values above the training range [0.2, 246.8] (highest 381.4)"
    )


def test_range_excess_on_both_sides_is_one_line():
    log = every_kind_log()
    frame = pd.DataFrame({column: [np.nan] * 3 for column, _, _ in EVERY_KIND})
    frame["age_years"] = [10.0, 50.0, 99.0]
    (excess,) = recodings.range_excess(log, frame)
    assert excess.describe() == (
        "age_years: 1 value below and 1 above the training range [18, 95] (lowest 10, highest 99)"
    )


def test_booleans_and_nullable_integers_replay_as_numbers():
    log = RecodingLog(
        OUTCOME,
        1,
        SourceInfo("t.csv", 3, "0" * 64),
        (
            Decision.make("flag", make_recoding("linear", {}), (0, 1)),
            Decision.make("count", make_recoding("linear", {}), (0, 9)),
        ),
    )
    frame = pd.DataFrame(
        {"flag": pd.array([True, False, None], dtype="boolean"), "count": pd.array([1, None, 3])}
    )
    out = recodings.apply_to_frame(log, frame)
    np.testing.assert_array_equal(out["flag__lin"], [1.0, 0.0, np.nan])
    np.testing.assert_array_equal(out["count__lin"], [1.0, np.nan, 3.0])

"""Shared cases for the recoding-log tests: a log holding every kind, and the sample files.

The numbers are written out by hand (not learned), so the golden files change only when the
file format or a kind's SQL changes, never when the engine's learning does. After such a
change, rewrite them with ``BENDWISE_UPDATE_GOLDEN=1 pytest tests/test_recodings_format.py
tests/test_recodings_sql.py`` and review the diff.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pandas as pd
from conftest import GOLDEN, SAMPLE, UPDATE_GOLDEN

from tui import __version__
from tui.engine.forms import MissingFill, Recoding, make_recoding
from tui.recodings import Decision, RecodingLog, SetAside, SourceInfo

TRAINING = SAMPLE / "surgical_cohort.csv"
FRESH = SAMPLE / "surgical_cohort_fresh.csv"
OUTCOME = "wound_infection_30d"

WRITER = f"bendwise {__version__}"
WHEN = "2026-03-02T09:15:00+00:00"

# (column, recoding, training range) for every kind, repeated powers and clip included.
EVERY_KIND: list[tuple[str, Recoding, tuple[float, float]]] = [
    ("age_years", make_recoding("linear", {}), (18.0, 95.0)),
    ("crp_mg_l", make_recoding("log", {"shift": 0.0}), (0.2, 246.8)),
    ("weight_change_kg", make_recoding("log", {"shift": 12.0}), (-11.8, 10.2)),
    ("blood_loss_ml", make_recoding("fp1", {"power": 0.5, "shift": 0.0}), (5.0, 3877.0)),
    ("preop_stay_hours", make_recoding("fp1", {"power": 0, "shift": 0.0}), (2.0, 323.0)),
    ("creatinine_umol_l", make_recoding("fp2", {"powers": [-2, -1], "shift": 0.0}), (30.0, 1026.0)),
    ("glucose_mmol_l", make_recoding("fp2", {"powers": [0, 0], "shift": 0.0}), (3.0, 12.0)),
    ("wbc_10e9_l", make_recoding("fp2", {"powers": [0.5, 0.5], "shift": 0.0}), (2.0, 15.0)),
    ("bmi", make_recoding("quadratic", {}, clip=(16.0, 45.0)), (16.0, 55.0)),
    ("sodium_mmol_l", make_recoding("spline", {"knots": [133.0, 138.0, 141.0, 146.0]}), (126, 152)),
    ("albumin_g_l", make_recoding("spline", {"knots": [30.0, 38.0, 45.0]}), (18.0, 55.0)),
    (
        "temperature_c",
        make_recoding("spline", {"knots": [36.1, 36.4, 36.6, 36.8, 37.0, 37.2, 37.6]}),
        (35.5, 38.4),
    ),
    (
        "operation_minutes",
        make_recoding("hinge", {"knot": 150.0}, clip=(20.0, 380.0)),
        (20.0, 380.0),
    ),
    ("hba1c_pct", make_recoding("indicator", {"cut": 6.5}), (4.2, 13.5)),
    ("incision_length_cm", make_recoding("bands", {"edges": [5.0, 9.5, 15.0]}), (2.0, 40.0)),
    ("haemoglobin_g_l", make_recoding("linear", {}, clip=(90.0, 170.0)), (70.0, 185.0)),
    # Missing-value handling: a fill alone, a fill with an indicator, a fill beyond the clip.
    ("height_cm", make_recoding("linear", {}, missing=MissingFill(170.0)), (140.0, 205.0)),
    (
        "potassium_mmol_l",
        make_recoding(
            "spline", {"knots": [3.6, 4.1, 4.6]}, clip=(3.0, 5.5), missing=MissingFill(6.0, True)
        ),
        (2.8, 6.0),
    ),
    (
        "days_since_prior_admission",
        make_recoding("log", {"shift": 1.0}, missing=MissingFill(365.0, True)),
        (1.0, 730.0),
    ),
    # The side the analyst picked: 1 from the cut upwards (a smoker).
    ("smoking_pack_years", make_recoding("indicator", {"cut": 0.5, "side": "above"}), (0.0, 150.0)),
]


def every_kind_log() -> RecodingLog:
    """A log with every kind, repeated FP2 powers, clip, evidence and set-aside columns."""
    log = RecodingLog(
        outcome_column=OUTCOME,
        event=1,
        source=SourceInfo(
            name="surgical_cohort.csv",
            rows=5000,
            sha256="4a3bdfbafbd7d5ca04646a28fcb1a87b271f31a8f3776b4d35ee94a5d3215f71",
        ),
        written_by=WRITER,
    )
    for i, (column, recoding, training_range) in enumerate(EVERY_KIND):
        decision = Decision.make(
            column,
            recoding,
            training_range,
            note=f"chosen for the wound-infection model, step {i + 1}",
            evidence={
                "delta_aic": -3.5 - i,
                "df": len(recoding.suffixes()),
                "groups": 4,
                "bendwise_version": __version__,
            },
            taken=log.output_names(),
            decided_by=None if i == 0 else "analyst-1",  # the first as an older log has it
        )
        log = log.with_decision(_at(decision))
    log = log.with_set_aside(
        SetAside("record_id", "identifier, not a predictor", WHEN, decided_by="analyst-1")
    )
    return log.with_set_aside(SetAside("antibiotic_dose_g", "the same in every row", WHEN))


def _at(decision: Decision) -> Decision:
    return replace(decision, decided_at=WHEN)


def output_columns(log: RecodingLog) -> list[str]:
    """Every output name, in log order."""
    return [name for d in log.decisions for name in d.outputs]


def golden_text(name: str, actual: str) -> str:
    """The golden file's text (rewritten from ``actual`` when UPDATE_GOLDEN is set)."""
    path = GOLDEN / name
    if UPDATE_GOLDEN:
        path.parent.mkdir(exist_ok=True)
        path.write_text(actual.replace(WRITER, "bendwise <version>"), encoding="utf-8")
    return read_golden(name)


def read_golden(name: str) -> str:
    """A golden file's text, with this bendwise's version filled in."""
    return (GOLDEN / name).read_text(encoding="utf-8").replace("bendwise <version>", WRITER)


def assert_same_outputs(python: pd.DataFrame, database: pd.DataFrame, names: list[str]) -> None:
    """Each output equal to 1e-9, NULL (NaN) in exactly the same rows."""
    for name in names:
        ours = python[name].to_numpy(dtype=float)
        theirs = database[name].to_numpy(dtype=float)
        # NULL in the database where Python has NaN, and the same numbers elsewhere.
        np.testing.assert_array_equal(np.isnan(ours), np.isnan(theirs), err_msg=name)
        np.testing.assert_allclose(ours, theirs, rtol=1e-9, atol=1e-9, err_msg=name)


def assert_missing_rows(rows: pd.DataFrame, log: RecodingLog) -> None:
    """Rows whose x is missing everywhere: outputs missing unless the recoding fills them;
    a filled output equals the output of the fill itself, and the indicator is 1."""
    for decision in log.decisions:
        outputs = rows[list(decision.outputs)].to_numpy(dtype=float)
        rule = decision.recoding.missing
        if rule is None:
            assert np.isnan(outputs).all(), decision.column
            continue
        expected = decision.recoding.apply(np.array([rule.fill]))[0]
        if rule.indicator:
            expected[-1] = 1.0
        np.testing.assert_allclose(
            outputs, np.tile(expected, (len(rows), 1)), rtol=1e-9, err_msg=decision.column
        )


def edge_values(log: RecodingLog) -> list[float]:
    """Every number in the log, a step either side of it, and values where logs break."""
    numbers = {-20.0, -12.0, -11.999, 0.0, 1e-9, 1.0, 500.0}
    for decision in log.decisions:
        params = decision.recoding.params
        for key in ("knots", "edges"):
            numbers.update(params.get(key, []))
        for key in ("knot", "cut"):
            if key in params:
                numbers.add(params[key])
        if decision.recoding.clip:
            numbers.update(decision.recoding.clip)
        if decision.recoding.missing:
            numbers.add(decision.recoding.missing.fill)
    return sorted({v + d for v in numbers for d in (-1e-6, 0.0, 1e-6)})

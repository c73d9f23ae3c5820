"""The log file: golden text, round trips, the shipped schema, and atomic saving."""

from __future__ import annotations

import json
import os
import re
from dataclasses import replace

import numpy as np
import pytest
from recodings_cases import every_kind_log, golden_text, read_golden

from tui import atomic, recodings
from tui.engine.forms import KINDS, make_recoding
from tui.problems import InputProblem
from tui.recodings import Decision, LogProblem
from tui.recodings.evidence import Evidence

GOLDEN_LOG = "every_kind.recodings.json"


def test_log_text_matches_the_golden_file():
    text = recodings.dumps(every_kind_log())
    assert text == golden_text(GOLDEN_LOG, text)


def test_golden_file_loads_to_the_same_log():
    assert recodings.loads(read_golden(GOLDEN_LOG)) == every_kind_log()


def test_save_load_round_trip_is_identical(tmp_path):
    log = every_kind_log()
    first = tmp_path / "a.recodings.json"
    recodings.save(log, first)
    again = recodings.load(first)
    assert again == log
    second = tmp_path / "b.recodings.json"
    recodings.save(again, second)
    assert second.read_bytes() == first.read_bytes()


def test_file_is_indented_with_stable_key_order():
    document = json.loads(recodings.dumps(every_kind_log()))
    assert list(document) == [
        "format", "format_version", "written_by", "outcome", "source", "recodings", "set_aside"
    ]  # fmt: skip
    entry = document["recodings"][8]
    assert list(entry) == [
        "column", "kind", "params", "clip", "outputs", "range", "note", "decided_at",
        "decided_by", "evidence"
    ]  # fmt: skip
    assert "decided_by" not in document["recodings"][0]  # not recorded: not written
    assert document["format"] == "bendwise-recodings" and document["format_version"] == 1
    # Knot lists stay on one line so that a moved knot is a one-line change.
    assert '"knots": [133.0, 138.0, 141.0, 146.0]' in recodings.dumps(every_kind_log())


def test_output_names_follow_the_documented_rule():
    log = every_kind_log()
    spline = log.decision_for("sodium_mmol_l")
    assert spline.outputs == (
        "sodium_mmol_l__lin",
        "sodium_mmol_l__spl1",
        "sodium_mmol_l__spl2",
    )
    assert log.decision_for("incision_length_cm").outputs == (
        "incision_length_cm__band1",
        "incision_length_cm__band2",
        "incision_length_cm__band3",
    )
    # A name already taken gets _2.
    clash = Decision.make("bmi", make_recoding("linear", {}), (0, 1), taken={"bmi__lin"})
    assert clash.outputs == ("bmi__lin_2",)


def test_schema_lists_exactly_the_registered_kinds():
    schema = recodings.schema()
    assert set(schema["$defs"]["recoding"]["properties"]["kind"]["enum"]) == set(KINDS)


def test_evidence_numbers_become_plain_json():
    log = every_kind_log()
    first = log.decisions[0]
    odd = replace(
        first,
        evidence=Evidence.from_json(
            {"delta_aic": float("nan"), "df": np.int64(2), "adjusted_for": ("age", np.str_("w"))}
        ),
    )
    document = json.loads(recodings.dumps(log.with_decision(odd)))
    entry = next(e for e in document["recodings"] if e["column"] == first.column)
    assert entry["evidence"] == {"delta_aic": None, "df": 2, "adjusted_for": ["age", "w"]}


@pytest.mark.parametrize(
    "change, where",
    [
        (
            lambda d: replace(d, recoding=make_recoding("spline", {"knots": [3.0, 1.0, 2.0]})),
            "knots",
        ),
        (lambda d: replace(d, outputs=("age_years__lin", "extra")), "outputs"),
        (lambda d: replace(d, outputs=("crp_mg_l__log",)), "outputs[0]"),
        (lambda d: replace(d, recoding=make_recoding("linear", {}, clip=(5.0, 1.0))), "clip"),
    ],
)
def test_save_refuses_a_log_that_would_not_load(tmp_path, change, where):
    log = every_kind_log()
    bad = log.with_decision(change(log.decisions[0]))
    target = tmp_path / "x.recodings.json"
    with pytest.raises(LogProblem, match=re.escape(f".{where}: ")) as problem:
        recodings.save(bad, target)
    assert str(target) in str(problem.value)
    assert not target.exists()


def test_interrupted_save_leaves_the_previous_file_intact(tmp_path, monkeypatch):
    target = tmp_path / "cohort.recodings.json"
    log = every_kind_log()
    recodings.save(log, target)
    before = target.read_bytes()

    def crash(src, dst):
        raise OSError(28, "No space left on device")

    # The failure comes after the new text is written and synced, before the rename.
    monkeypatch.setattr(atomic.os, "replace", crash)
    changed = log.without("bmi")
    with pytest.raises(InputProblem, match="No space left"):
        recodings.save(changed, target)
    monkeypatch.undo()
    assert target.read_bytes() == before
    assert recodings.load(target) == log
    assert sorted(os.listdir(tmp_path)) == ["cohort.recodings.json"]  # no temporary left


def test_save_replaces_the_file_when_nothing_fails(tmp_path):
    target = tmp_path / "cohort.recodings.json"
    log = every_kind_log()
    recodings.save(log, target)
    recodings.save(log.without("bmi"), target)
    assert recodings.load(target).decision_for("bmi") is None

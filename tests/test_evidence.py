"""Typed evidence: what the app writes, what an older or hand-written log is read as, and
that a log read and written again keeps exactly its keys."""

import json
from dataclasses import replace

import pytest
from recodings_cases import every_kind_log

from tui import recodings
from tui.engine.compare import compare_forms
from tui.engine.counts import reduce_column
from tui.engine.scan import ScanSettings
from tui.recodings import LogProblem
from tui.recodings.decisions import Design, judged_evidence
from tui.recodings.evidence import (
    DEFAULT_GROUPS,
    DEFAULT_KNOTS,
    KEYS,
    DataFingerprint,
    Evidence,
)


def _document_with(evidence: dict) -> str:
    """The every-kind log with the first entry's evidence replaced."""
    document = json.loads(recodings.dumps(every_kind_log()))
    document["recodings"][0]["evidence"] = evidence
    return json.dumps(document)


def test_an_entry_without_groups_or_knots_reads_the_scans_defaults():
    log = recodings.loads(_document_with({"delta_aic": -2.0}))
    evidence = log.decisions[0].evidence
    assert (evidence.groups, evidence.knots) == (DEFAULT_GROUPS, DEFAULT_KNOTS)
    assert (ScanSettings().groups, ScanSettings().knots) == (DEFAULT_GROUPS, DEFAULT_KNOTS)
    assert not evidence.holds("groups") and evidence.holds("delta_aic")
    assert evidence.row.delta_aic == -2.0 and evidence.score.statistic is None
    assert evidence.adjusted_for == () and evidence.weights.column is None
    assert evidence.data is None


def test_reading_and_writing_again_keeps_the_keys_and_unknown_ones():
    held = {"groups": 10, "score": None, "from_elsewhere": {"a": [1, 2]}}
    log = recodings.loads(_document_with(held))
    again = json.loads(recodings.dumps(log))
    assert again["recodings"][0]["evidence"] == held
    assert log.decisions[0].evidence.extra == {"from_elsewhere": {"a": [1, 2]}}


@pytest.mark.parametrize(
    "evidence, key",
    [
        ({"groups": "four"}, "groups"),
        ({"knots": 4.5}, "knots"),
        ({"score": "79"}, "score"),
        ({"adjusted_for": "age"}, "adjusted_for"),
        ({"by_hand": 1}, "by_hand"),
        ({"data": {"sha256": "ab"}}, "data"),
    ],
)
def test_a_value_of_the_wrong_type_is_named(evidence, key):
    with pytest.raises(LogProblem, match=rf"recodings\[0\]\.evidence\.{key}: must be"):
        recodings.loads(_document_with(evidence))


def test_evidence_the_app_writes_holds_every_key(rng):
    x = rng.uniform(1.0, 9.0, 400)
    y = (rng.random(400) < 0.3).astype(float)
    row = compare_forms(reduce_column(x, y)).rows[1]
    evidence = judged_evidence(
        row, 5, 3, True, None, False, Design(("age",), "adjusted for age (linear)"),
        DataFingerprint("cohort.csv", "ab" * 32),
    )  # fmt: skip
    assert set(evidence.to_json()) == set(KEYS)
    assert evidence.groups == 5 and evidence.knots == 3 and evidence.row.by_hand
    assert evidence["adjusted_for"] == ["age"] and evidence["score"] is None
    first = every_kind_log().decisions[0]
    log = every_kind_log().with_decision(replace(first, evidence=evidence))
    back = recodings.loads(recodings.dumps(log)).decision_for(first.column).evidence
    assert back == evidence


def test_a_decision_that_recorded_nothing_writes_an_empty_object():
    decision = recodings.Decision.make("x", every_kind_log().decisions[0].recoding, (0, 1))
    assert decision.evidence.to_json() == {} and isinstance(decision.evidence, Evidence)


def test_the_score_statistic_is_recorded_and_older_logs_read_as_lr(rng):
    from tui.engine.adjust import Adjustment
    from tui.engine.scan import scan_column

    older = recodings.loads(_document_with({"score": 12.5, "score_df": 2}))
    assert older.decisions[0].evidence.score.test == "LR"  # before the key existed
    assert not older.decisions[0].evidence.holds("score_statistic")
    assert "score_statistic" not in json.loads(recodings.dumps(older))["recodings"][0]["evidence"]
    x = rng.gamma(3.0, 10.0, 1200).round()
    y = (rng.random(x.size) < 0.3).astype(float)
    w = rng.lognormal(0.0, 0.7, x.size)
    survey = Adjustment(weights=w / w.mean(), weight_column="w", weight_kind="survey")
    scan, table = scan_column("x", x, y, adjust=survey)
    evidence = judged_evidence(
        table.row("spline"), 4, 4, False, scan, True, Design((), "survey weights w", "w", "survey"),
        DataFingerprint("cohort.csv", None),
    )  # fmt: skip
    assert evidence["score_statistic"] == "Wald (robust)" and evidence.score.test == scan.statistic
    first = every_kind_log().decisions[0]
    log = every_kind_log().with_decision(replace(first, evidence=evidence))
    back = recodings.loads(recodings.dumps(log)).decision_for(first.column).evidence
    assert back.score.test == "Wald (robust)" and back == evidence

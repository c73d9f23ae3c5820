"""``bendwise diff``: recodings added, removed and changed between two logs, as table or JSON."""

from __future__ import annotations

import json
from dataclasses import replace
from pathlib import Path

import pytest
from recodings_cases import every_kind_log

from tui.cli.main import main
from tui.engine.forms import make_recoding
from tui.recodings import RecodingLog, SetAside, SourceInfo, save
from tui.recodings.codec import to_document
from tui.recodings.diff import RECORD_KEYS, Change, diff_documents, diff_logs
from tui.recodings.evidence import NOTHING

BASE = every_kind_log()


def _write(tmp_path: Path, name: str, log: RecodingLog) -> Path:
    path = tmp_path / name
    save(log, path)
    return path


def _run(capsys, *args: str) -> tuple[int, str, str]:
    code = main(list(args))
    out = capsys.readouterr()
    return code, out.out, out.err


def _changed(log: RecodingLog, column: str, **fields) -> RecodingLog:
    return log.with_decision(replace(log.decision_for(column), **fields))


def _only_change(new: RecodingLog, column: str) -> tuple[Change, ...]:
    diff = diff_logs(BASE, new)
    assert not (diff.added or diff.removed or diff.log or diff.set_aside_added)
    assert [c.column for c in diff.changed] == [column]
    return diff.changed[0].changes


def test_equal_logs_exit_0(tmp_path: Path, capsys) -> None:
    # Same recodings, in another order, with other notes, times and evidence.
    reordered = replace(BASE, decisions=tuple(reversed(BASE.decisions)))
    for d in reordered.decisions[:3]:
        reordered = reordered.with_decision(
            replace(d, note="reworded", decided_at="2027-01-01T00:00:00+00:00", evidence=NOTHING)
        )
    old, new = _write(tmp_path, "old.json", BASE), _write(tmp_path, "new.json", reordered)
    code, out, err = _run(capsys, "diff", str(old), str(new))
    assert (code, err) == (0, "")
    assert "same recodings" in out
    code, out, _ = _run(capsys, "diff", str(old), str(old), "--format", "json")
    assert code == 0 and json.loads(out)["equal"] is True


def test_kind_change() -> None:
    new = _changed(
        BASE, "age_years", recoding=make_recoding("quadratic", {}), outputs=("age__lin", "age__sq")
    )
    changes = {c.field: (c.old, c.new) for c in _only_change(new, "age_years")}
    assert changes["kind"] == ("linear", "quadratic")
    assert changes["outputs"] == (["age_years__lin"], ["age__lin", "age__sq"])


def test_parameter_change_names_the_parameter() -> None:
    new = _changed(BASE, "hba1c_pct", recoding=make_recoding("indicator", {"cut": 6.4}))
    assert _only_change(new, "hba1c_pct") == (Change("params.cut", 6.5, 6.4),)


def test_clip_added_and_dropped() -> None:
    age = BASE.decision_for("age_years")
    clipped = _changed(BASE, "age_years", recoding=replace(age.recoding, clip=(20.0, 90.0)))
    assert _only_change(clipped, "age_years") == (Change("clip", None, [20.0, 90.0]),)
    bmi = BASE.decision_for("bmi")
    unclipped = _changed(BASE, "bmi", recoding=replace(bmi.recoding, clip=None))
    assert _only_change(unclipped, "bmi") == (Change("clip", [16.0, 45.0], None),)


def test_outputs_and_range_changes() -> None:
    renamed = _changed(BASE, "crp_mg_l", outputs=("log_crp",))
    assert _only_change(renamed, "crp_mg_l") == (Change("outputs", ["crp_mg_l__log"], ["log_crp"]),)
    wider = _changed(BASE, "crp_mg_l", range=(0.1, 300.0))
    assert _only_change(wider, "crp_mg_l") == (Change("range", [0.2, 246.8], [0.1, 300.0]),)


def test_missing_handling_is_compared_when_a_log_has_it() -> None:
    # Documents of a later format with a missing-value key: any defining key is compared.
    old, new = to_document(BASE), to_document(BASE)
    old["recodings"][0]["missing"] = {"strategy": "indicator"}
    new["recodings"][0]["missing"] = {"strategy": "fill", "value": 40.0}
    new["recodings"][1]["missing"] = {"strategy": "indicator"}
    diff = diff_documents(old, new)
    by_column = {c.column: c.changes for c in diff.changed}
    assert by_column == {
        "age_years": (
            Change("missing.strategy", "indicator", "fill"),
            Change("missing.value", None, 40.0),
        ),
        "crp_mg_l": (Change("missing", None, {"strategy": "indicator"}),),
    }
    assert "missing" not in RECORD_KEYS


def test_added_removed_and_set_aside(tmp_path: Path, capsys) -> None:
    new = BASE.without("bmi").with_set_aside(SetAside("bmi", "too many typing errors"))
    new = new.without("record_id")
    diff = diff_logs(BASE, new)
    assert [e["column"] for e in diff.removed] == ["bmi"]
    assert diff.removed[0]["kind"] == "quadratic" and diff.removed[0]["clip"] == [16.0, 45.0]
    assert diff.set_aside_added == ("bmi",)
    assert diff.set_aside_removed == ("record_id",)
    back = diff_logs(new, BASE)
    assert [e["column"] for e in back.added] == ["bmi"]
    assert (back.set_aside_added, back.set_aside_removed) == (("record_id",), ("bmi",))

    old_path, new_path = _write(tmp_path, "old.json", BASE), _write(tmp_path, "new.json", new)
    code, out, err = _run(capsys, "diff", str(old_path), str(new_path))
    assert (code, err) == (1, "")
    rows = [line.split() for line in out.splitlines()]
    assert rows[5][:3] == ["removed", "bmi", "recoding"]
    assert any(r[:2] == ["set", "aside"] and "record_id" in r for r in rows)
    assert "1 recoding(s) removed" in out and "1 column(s) newly set aside" in out


def test_outcome_and_source_changes_count() -> None:
    other = replace(
        BASE,
        event=True,
        source=SourceInfo(name="cohort_2027.csv", rows=5000, sha256=BASE.source.sha256),
    )
    diff = diff_logs(BASE, other)
    assert not diff.equal
    assert diff.log == (
        Change("outcome.event", 1, True),  # true is not the number 1
        Change("source.name", "surgical_cohort.csv", "cohort_2027.csv"),
    )


def test_whole_and_fractional_numbers_that_are_equal_match() -> None:
    old, new = to_document(BASE), to_document(BASE)
    index = next(i for i, e in enumerate(old["recodings"]) if e["column"] == "preop_stay_hours")
    assert old["recodings"][index]["params"]["power"] == 0
    new["recodings"][index]["params"]["power"] = 0.0
    assert diff_documents(old, new).equal


def test_json_shape(tmp_path: Path, capsys) -> None:
    new = _changed(
        BASE.without("bmi"), "hba1c_pct", recoding=make_recoding("indicator", {"cut": 7})
    )
    new = new.with_set_aside(SetAside("bmi", "dropped"))
    old_path, new_path = _write(tmp_path, "old.json", BASE), _write(tmp_path, "new.json", new)
    code, out, _ = _run(capsys, "diff", str(old_path), str(new_path), "--format", "json")
    assert code == 1
    record = json.loads(out)
    assert list(record) == [
        "old", "new", "equal", "log", "recodings", "set_aside", "not_compared"
    ]  # fmt: skip
    assert (record["old"], record["new"], record["equal"]) == (str(old_path), str(new_path), False)
    assert record["log"] == []
    assert list(record["recodings"]) == ["added", "removed", "changed"]
    assert record["recodings"]["added"] == []
    assert [e["column"] for e in record["recodings"]["removed"]] == ["bmi"]
    assert record["recodings"]["changed"] == [
        {"column": "hba1c_pct", "changes": [{"field": "params.cut", "old": 6.5, "new": 7}]}
    ]
    assert record["set_aside"] == {"added": ["bmi"], "removed": []}
    assert record["not_compared"] == ["decided_at", "decided_by", "evidence", "note"]


@pytest.mark.parametrize(
    ("content", "fragment"),
    [
        (None, "file not found"),
        ("{not json", "not valid JSON"),
        ('{"format": "something-else"}', "not a bendwise recoding log"),
        ("", "is empty"),
        ("folder", "is a directory"),
    ],
    ids=["absent", "not-json", "not-a-log", "empty", "directory"],
)
def test_bad_log_is_one_line_exit_2(tmp_path: Path, capsys, content, fragment) -> None:
    good = _write(tmp_path, "good.json", BASE)
    bad = tmp_path / "bad.json"
    if content == "folder":
        bad.mkdir()
    elif content is not None:
        bad.write_text(content)
    for args in ((str(good), str(bad)), (str(bad), str(good))):
        code, out, err = _run(capsys, "diff", *args)
        assert (code, out) == (2, "")
        lines = err.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith("bendwise: ")
        assert str(bad) in lines[0] and fragment in lines[0], lines[0]


def test_unknown_format_option_is_a_usage_error(tmp_path: Path, capsys) -> None:
    good = _write(tmp_path, "good.json", BASE)
    with pytest.raises(SystemExit) as stop:
        main(["diff", str(good), str(good), "--format", "csv"])
    assert stop.value.code == 2
    assert "invalid choice" in capsys.readouterr().err

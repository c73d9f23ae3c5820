"""Hostile logs: every one is refused with one line naming the file and the entry at fault."""

from __future__ import annotations

import copy
import json

import pytest
from conftest import run_cli
from recodings_cases import GOLDEN, TRAINING, every_kind_log

from tui import recodings
from tui.recodings import LogProblem

GOLDEN_LOG = GOLDEN / "every_kind.recodings.json"
# Entries of the golden log used below.
LINEAR, LOG, FP1, FP2 = 0, 1, 3, 5
QUADRATIC, SPLINE, HINGE, BANDS, CLIPPED = 8, 9, 12, 14, 15


def golden_document() -> dict:
    return json.loads(GOLDEN_LOG.read_text(encoding="utf-8"))


def _set(path, value):
    """A change that sets the value at ``path`` (keys and indexes) in the document."""

    def change(doc):
        *head, last = path
        target = doc
        for part in head:
            target = target[part]
        target[last] = value

    return change


def _drop(path):
    def change(doc):
        *head, last = path
        target = doc
        for part in head:
            target = target[part]
        del target[last]

    return change


R = "recodings"
DOCUMENT_CASES = [
    # unknown kind
    (_set([R, FP1, "kind"], "cubic"), "recodings[3].kind", "unknown kind 'cubic'"),
    # missing or mistyped fields
    (_drop([R, FP1, "params"]), "recodings[3].params", "is missing"),
    (_drop([R, HINGE, "params", "knot"]), "recodings[12].params.knot", "is missing"),
    (_drop([R, LINEAR, "outputs"]), "recodings[0].outputs", "is missing"),
    (_drop(["source"]), "source", "is missing"),
    (_set([R, SPLINE, "params", "knots"], "133,138"), "recodings[9].params.knots", "a list"),
    (_set([R, SPLINE, "params", "knots", 1], "138"), "recodings[9].params.knots[1]", "a number"),
    (_set([R, HINGE, "params", "knot"], True), "recodings[12].params.knot", "a number"),
    (_set(["source", "rows"], "5000"), "source.rows", "whole number"),
    (_set([R, LINEAR, "note"], None), "recodings[0].note", "must be text"),
    (_set([R], {}), "recodings", "must be a list"),
    (_set(["outcome", "event"], [1]), "outcome.event", "not a list"),
    (_set([R, LINEAR, "clp"], [0, 1]), "recodings[0].clp", "not a known key"),
    (_set([R, LOG, "params", "power"], 2), "recodings[1].params.power", "not a known key"),
    (_set(["extra"], 1), "extra", "not a known key"),
    (_set(["source", "sha256"], "abc"), "source.sha256", "hexadecimal"),
    (_set([R, LINEAR, "column"], "age\nyears"), "recodings[0].column", "control characters"),
    (_set([R, LINEAR, "decided_at"], "yesterday"), "recodings[0].decided_at", "ISO 8601"),
    # numbers a kind cannot apply
    (_set([R, FP1, "params", "power"], 4), "recodings[3].params.power", "not one of"),
    (_set([R, LOG, "params", "shift"], -1.0), "recodings[1].params.shift", "at least 0"),
    (_set([R, FP2, "params", "powers"], [-1, -2]), "recodings[5].params.powers", "increasing"),
    (_set([R, QUADRATIC, "clip"], [45.0, 16.0]), "recodings[8].clip", "low"),
    (_set([R, QUADRATIC, "clip"], [16.0]), "recodings[8].clip", "at least 2"),
    (_set([R, LINEAR, "range"], [95.0, 18.0]), "recodings[0].range", "exceeds"),
    # unsorted knots and edges
    (
        _set([R, SPLINE, "params", "knots"], [133.0, 141.0, 138.0, 146.0]),
        "recodings[9].params.knots",
        "strictly increasing",
    ),
    (
        _set([R, SPLINE, "params", "knots"], [133.0, 138.0, 138.0, 146.0]),
        "recodings[9].params.knots",
        "strictly increasing",
    ),
    (
        _set([R, SPLINE, "params", "knots"], [float(k) for k in range(8)]),
        "recodings[9].params.knots",
        "at most 7",
    ),
    (
        _set([R, BANDS, "params", "edges"], [9.5, 5.0, 15.0]),
        "recodings[14].params.edges",
        "strictly increasing",
    ),
    (_set([R, BANDS, "params", "edges"], []), "recodings[14].params.edges", "at least 1"),
    # duplicate outputs and clashing names
    (
        _set([R, SPLINE, "outputs"], ["s__lin", "s__lin", "s__rcs2"]),
        "recodings[9].outputs",
        "more than once",
    ),
    (
        _set([R, CLIPPED, "outputs"], ["age_years__lin"]),
        "recodings[15].outputs[0]",
        "an output of recodings[0]",
    ),
    (_set([R, LINEAR, "outputs"], ["bmi"]), "recodings[0].outputs[0]", "column recoded"),
    (_set([R, LINEAR, "outputs"], ["wound_infection_30d"]), "recodings[0].outputs[0]", "outcome"),
    (_set([R, SPLINE, "outputs"], ["a", "b"]), "recodings[9].outputs", "gives 3 output"),
    (_set([R, CLIPPED, "column"], "age_years"), "recodings[15].column", "already"),
    (_set([R, LINEAR, "column"], "record_id"), "recodings[0].column", "set aside"),
    # format and version
    (_set(["format_version"], 2), "format_version", "newer than this bendwise reads"),
    (_set(["format_version"], "1"), "format_version", "must be 1"),
    (_set(["format"], "something-else"), "format", "not a bendwise recoding log"),
]


@pytest.mark.parametrize("change, where, words", DOCUMENT_CASES)
def test_hostile_document_is_refused_naming_the_entry(tmp_path, change, where, words):
    document = golden_document()
    change(document)
    path = tmp_path / "hostile.recodings.json"
    path.write_text(json.dumps(document, indent=2), encoding="utf-8")
    with pytest.raises(LogProblem) as problem:
        recodings.load(path)
    message = str(problem.value)
    assert message.startswith(f"{path}: {where}: "), message
    assert words in message
    assert "\n" not in message


def _replace_once(old: str, new: str):
    def change(text: str) -> str:
        assert text.count(old) >= 1, old
        return text.replace(old, new, 1)

    return change


TEXT_CASES = [
    (_replace_once('"knot": 150.0', '"knot": NaN'), "recodings[12].params.knot", "NaN"),
    (_replace_once('"shift": 12.0', '"shift": Infinity'), "recodings[2].params.shift", "Infinity"),
    (
        _replace_once('"range": [20.0, 380.0]', '"range": [-Infinity, 380.0]'),
        "recodings[12].range[0]",
        "-Infinity",
    ),
    (_replace_once('"cut": 6.5', '"cut": 1e999'), "recodings[13].params.cut", "finite"),
    (_replace_once('"delta_aic": -3.5', '"delta_aic": NaN'), "recodings[0].evidence.delta_aic", ""),
    (
        _replace_once('"kind": "linear",', '"kind": "linear", "kind": "log",'),
        "recodings[0].kind",
        "more than once",
    ),
]


@pytest.mark.parametrize("change, where, words", TEXT_CASES)
def test_non_finite_numbers_and_repeated_keys_are_refused(tmp_path, change, where, words):
    path = tmp_path / "hostile.recodings.json"
    path.write_text(change(GOLDEN_LOG.read_text(encoding="utf-8")), encoding="utf-8")
    with pytest.raises(LogProblem) as problem:
        recodings.load(path)
    message = str(problem.value)
    assert message.startswith(f"{path}: {where}: "), message
    assert words in message


WHOLE_FILE_CASES = [
    (lambda text: text[: len(text) // 2], "incomplete"),
    (lambda text: text.rstrip()[:-1], "incomplete"),
    (lambda text: "format: bendwise-recodings\nrecodings: []\n", "not valid JSON at line 1"),
    (lambda text: text.replace('"format_version": 1,', '"format_version": 1', 1), "line 4"),
    (lambda text: "", "is empty"),
    (lambda text: "[]", "must hold a JSON object"),
    (lambda text: "null", "must hold a JSON object"),
]


@pytest.mark.parametrize("change, words", WHOLE_FILE_CASES)
def test_truncated_and_non_json_files_are_refused(tmp_path, change, words):
    path = tmp_path / "broken.recodings.json"
    path.write_text(change(GOLDEN_LOG.read_text(encoding="utf-8")), encoding="utf-8")
    with pytest.raises(LogProblem) as problem:
        recodings.load(path)
    assert str(problem.value).startswith(f"{path}: ")
    assert words in str(problem.value)


def test_binary_file_missing_file_and_folder_are_refused(tmp_path):
    binary = tmp_path / "photo.recodings.json"
    binary.write_bytes(b"\x89PNG\r\n\x1a\n\x00\x00\xff\xfe")
    with pytest.raises(LogProblem, match="not UTF-8"):
        recodings.load(binary)
    with pytest.raises(LogProblem, match="file not found"):
        recodings.load(tmp_path / "absent.json")
    with pytest.raises(LogProblem, match="is a directory"):
        recodings.load(tmp_path)


def test_validate_checks_a_document_already_in_memory():
    document = golden_document()
    assert recodings.validate(document) == recodings.load(GOLDEN_LOG)
    assert recodings.validate(document).decisions == every_kind_log().decisions
    document["recodings"][SPLINE]["params"]["knots"][0] = float("nan")
    with pytest.raises(LogProblem, match=r"^<log>: recodings\[9\]\.params\.knots\[0\]: "):
        recodings.validate(document)


def test_loading_is_not_changed_by_the_file_it_refused(tmp_path):
    # A refused file is left exactly as it was.
    path = tmp_path / "hostile.recodings.json"
    text = GOLDEN_LOG.read_text(encoding="utf-8").replace('"kind": "fp1"', '"kind": "cubic"', 1)
    path.write_text(text, encoding="utf-8")
    with pytest.raises(LogProblem):
        recodings.load(path)
    assert path.read_text(encoding="utf-8") == text


@pytest.mark.parametrize("command", ["sql", "replay"])
def test_commands_print_one_line_and_exit_2_for_a_hostile_log(tmp_path, command):
    path = tmp_path / "hostile.recodings.json"
    document = golden_document()
    document["recodings"][SPLINE]["params"]["knots"] = [133.0, 141.0, 138.0, 146.0]
    path.write_text(json.dumps(document), encoding="utf-8")
    args = [command, str(path)]
    if command == "replay":
        args += [str(TRAINING), "--output", str(tmp_path / "out.csv")]
    done = run_cli(*args)
    assert done.returncode == 2
    assert done.stderr.count("\n") == 1 and "Traceback" not in done.stderr
    assert done.stderr.startswith(f"bendwise: {path}: recodings[9].params.knots: ")
    assert done.stdout == ""
    assert not (tmp_path / "out.csv").exists()


def test_the_hostile_cases_start_from_a_valid_log():
    # Guards the tests above: each failure comes from its change, not from the base file.
    assert recodings.validate(copy.deepcopy(golden_document())).decisions


def _refusal(document: dict) -> str:
    with pytest.raises(LogProblem) as caught:
        recodings.loads(json.dumps(document), "log.json")
    return caught.value.path


def test_schema_problems_come_in_document_order_not_by_name():
    # Two problems: "source" is written before "recodings" in the file, but sorts after it.
    document = golden_document()
    document["source"]["rows"] = "5000"
    document[R][LINEAR]["note"] = None
    assert list(document).index("source") < list(document).index(R)
    assert _refusal(document) == "source.rows"
    # The same two problems, with the recodings written first: now they are named first.
    moved = {k: document[k] for k in document if k not in ("source", R)}
    moved[R], moved["source"] = document[R], document["source"]
    assert _refusal(moved) == "recodings[0].note"


def test_unknown_keys_are_named_in_document_order():
    document = golden_document()
    document[R][LINEAR]["zone"] = 1
    document[R][LINEAR]["area"] = 2
    assert _refusal(document) == "recodings[0].zone"
    # An unknown key written after a problem deeper in the same entry comes second.
    document = golden_document()
    document[R][LINEAR]["params"] = {"power": 2}
    document[R][LINEAR]["after"] = 1
    assert _refusal(document) == "recodings[0].params.power"

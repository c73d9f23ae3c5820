"""The ``missing`` key of a recoding: a fill value and an optional 0/1 indicator, applied by
Python replay and by the SQL of every dialect (DuckDB here, in-process)."""

from __future__ import annotations

import json
import re
from dataclasses import replace
from pathlib import Path

import duckdb
import numpy as np
import pandas as pd
import pytest
from recodings_cases import (
    GOLDEN,
    OUTCOME,
    assert_missing_rows,
    assert_same_outputs,
    every_kind_log,
)

from tui import recodings
from tui.engine.forms import MissingFill, make_recoding
from tui.recodings import Decision, LogProblem, RecodingLog, SourceInfo
from tui.recodings.codec import to_document
from tui.recodings.diff import diff_logs

GOLDEN_LOG = GOLDEN / "every_kind.recodings.json"
# Entries of the golden log holding a missing-value rule (see recodings_cases.EVERY_KIND).
FILL_ONLY, FILL_SPLINE, FILL_LOG = 16, 17, 18
X = np.array([np.nan, 0.5, 2.0, np.inf, 3.0, -np.inf, 9.0])
WAS_MISSING = np.array([1, 0, 0, 1, 0, 1, 0], dtype=float)


def _log(*decisions: Decision) -> RecodingLog:
    return RecodingLog(OUTCOME, 1, SourceInfo("t.csv", 7, "0" * 64), tuple(decisions))


def test_replay_equals_the_formula_written_out_by_hand():
    # Fill first, then clip, then the kind: the order FORMAT.md states.
    clipped = Decision.make(
        "x", make_recoding("linear", {}, (1.0, 4.0), MissingFill(7.5, True)), (0, 9)
    )
    logged = Decision.make(
        "z", make_recoding("log", {"shift": 1.0}, None, MissingFill(2.0)), (0, 9)
    )
    cut = Decision.make(
        "w", make_recoding("indicator", {"cut": 2.5}, None, MissingFill(0.0)), (0, 9)
    )
    log = recodings.loads(recodings.dumps(_log(clipped, logged, cut)))
    out = recodings.apply_to_frame(log, pd.DataFrame({"x": X, "z": X, "w": X}))
    filled = lambda fill: np.where(np.isfinite(X), X, fill)  # noqa: E731
    np.testing.assert_allclose(out["x__lin"], np.minimum(np.maximum(filled(7.5), 1.0), 4.0))
    np.testing.assert_array_equal(out["x__missing"], WAS_MISSING)
    np.testing.assert_allclose(out["z__log"], np.log(filled(2.0) + 1.0))
    np.testing.assert_array_equal(out["w__below"], (filled(0.0) < 2.5).astype(float))
    assert list(out.columns[-4:]) == ["x__lin", "x__missing", "z__log", "w__below"]


def test_indicator_is_named_last_and_counted_as_an_output():
    d = Decision.make(
        "k",
        make_recoding("spline", {"knots": [1.0, 2.0, 3.0]}, None, MissingFill(2.0, True)),
        (0, 4),
    )
    assert d.outputs == ("k__lin", "k__spl1", "k__missing")
    assert d.missing_indicator == "k__missing"
    assert d.recoding.apply(np.array([np.nan])).shape == (1, 3)
    entry = to_document(_log(d))["recodings"][0]
    assert list(entry)[:5] == ["column", "kind", "params", "missing", "outputs"]
    assert entry["missing"] == {"fill": 2.0, "indicator": "k__missing"}


def test_a_log_without_the_key_behaves_as_before():
    d = Decision.make("x", make_recoding("linear", {}), (0, 9))
    entry = to_document(_log(d))["recodings"][0]
    assert "missing" not in entry
    out = recodings.apply_to_frame(_log(d), pd.DataFrame({"x": X}))
    np.testing.assert_array_equal(np.isnan(out["x__lin"]), WAS_MISSING.astype(bool))
    assert "NULL outputs\n" in recodings.to_sql(_log(d), "duckdb", "t")


def test_duckdb_fills_null_nan_and_infinity_exactly_as_python_replay():
    log = _log(
        Decision.make(
            "x", make_recoding("hinge", {"knot": 2.0}, (0.0, 5.0), MissingFill(6.0, True)), (0, 9)
        ),
        Decision.make(
            "z", make_recoding("fp1", {"power": -1, "shift": 0.0}, None, MissingFill(1.5)), (0, 9)
        ),
    )
    con = duckdb.connect()
    con.execute(
        "CREATE TABLE t AS SELECT * FROM (VALUES (1, 1.0, NULL), (2, 'nan'::DOUBLE, 'inf'::DOUBLE),"
        " (3, '-inf'::DOUBLE, 2.0), (4, NULL, 'nan'::DOUBLE), (5, 3.0, '-inf'::DOUBLE))"
        " AS v(id, x, z)"
    )
    database = con.execute(
        f"SELECT * FROM ({recodings.to_sql(log, 'duckdb', 't')}) ORDER BY id"
    ).df()
    frame = pd.DataFrame(
        {"x": [1.0, np.nan, -np.inf, np.nan, 3.0], "z": [np.nan, np.inf, 2.0, np.nan, -np.inf]}
    )
    python = recodings.apply_to_frame(log, frame)
    names = ["x__lin", "x__hinge", "x__missing", "z__fp1"]
    assert_same_outputs(python, database, names)
    assert database["x__missing"].tolist() == [0.0, 1.0, 1.0, 1.0, 0.0]
    assert not database[names].isna().to_numpy().any()  # every row has a score now
    assert_missing_rows(database.iloc[[1, 3]], _log(log.decisions[0]))


def test_a_change_of_fill_or_indicator_is_a_change_in_diff():
    base = every_kind_log()
    d = base.decision_for("height_cm")
    refilled = base.with_decision(
        replace(d, recoding=replace(d.recoding, missing=MissingFill(171.0)))
    )
    diff = diff_logs(base, refilled)
    [changed] = diff.changed
    assert [(c.field, c.old, c.new) for c in changed.changes] == [("missing.fill", 170.0, 171.0)]
    dropped = base.with_decision(replace(d, recoding=d.recoding.without_missing()))
    [changed] = diff_logs(base, dropped).changed
    assert ("missing", {"fill": 170.0}, None) in [(c.field, c.old, c.new) for c in changed.changes]


def test_the_format_document_example_of_a_filled_entry_does_what_it_says():
    text = (Path(recodings.__file__).with_name("FORMAT.md")).read_text(encoding="utf-8")
    blocks = re.findall(r"```json\n(.*?)```", text, re.DOTALL)
    document = json.loads(blocks[0])
    document["recodings"] = [json.loads(blocks[1])]
    log = recodings.validate(document)
    out = recodings.apply_to_frame(log, pd.DataFrame({"potassium_mmol_l": [np.nan, 9.0, 3.1]}))
    assert out["potassium_mmol_l__lin"].tolist() == [4.2, 6.5, 3.1]
    assert out["potassium_mmol_l__missing"].tolist() == [1.0, 0.0, 0.0]


def _golden() -> dict:
    return json.loads(GOLDEN_LOG.read_text(encoding="utf-8"))


def _refused(document: dict) -> str:
    with pytest.raises(LogProblem) as problem:
        recodings.validate(document, "log.json")
    return str(problem.value)


def _with(index: int, **changes) -> dict:
    doc = _golden()
    doc["recodings"][index].update(changes)
    return doc


HOSTILE = [
    # (entry changes, the message's entry path and words)
    ({"missing": {"fill": "170"}}, FILL_ONLY, "recodings[16].missing.fill: must be a number"),
    ({"missing": {"fill": True}}, FILL_ONLY, "recodings[16].missing.fill: must be a number"),
    (
        {"missing": {"indicator": "height_cm__missing"}},
        FILL_ONLY,
        "recodings[16].missing.fill: is missing",
    ),
    (
        {"missing": {"fill": 1.0, "impute": "median"}},
        FILL_ONLY,
        "recodings[16].missing.impute: is not a known key here (known: fill, indicator)",
    ),
    ({"missing": 170.0}, FILL_ONLY, "recodings[16].missing: must be an object"),
    (
        {"missing": {"fill": 6.0, "indicator": "potassium_mmol_l__lin"}},
        FILL_SPLINE,
        "recodings[17].missing.indicator: 'potassium_mmol_l__lin' clashes with an output",
    ),
    (
        {"missing": {"fill": 6.0, "indicator": "potassium_mmol_l"}},
        FILL_SPLINE,
        "recodings[17].missing.indicator: 'potassium_mmol_l' clashes with the source column",
    ),
    (
        {"missing": {"fill": 6.0, "indicator": "k_missing"}},
        FILL_SPLINE,
        "recodings[17].missing.indicator: 'k_missing' must be the last name in outputs",
    ),
    (
        # The indicator listed in outputs but its rule dropped: one output too many.
        {"missing": {"fill": 6.0}},
        FILL_SPLINE,
        "recodings[17].outputs: spline, 3 knots, clipped to [3, 5.5], missing as 6 gives 2",
    ),
]


@pytest.mark.parametrize(("changes", "index", "message"), HOSTILE)
def test_hostile_missing_entries_are_refused_by_name(changes, index, message):
    assert message in _refused(_with(index, **changes))


def test_an_indicator_named_like_another_column_or_output_is_refused():
    doc = _golden()
    entry = doc["recodings"][FILL_SPLINE]
    for clash, owner in (
        (OUTCOME, "the outcome column"),
        ("age_years", "the column recoded at recodings[0]"),
        ("age_years__lin", "an output of recodings[0]"),
        ("record_id", "the column set aside"),
    ):
        entry["missing"]["indicator"] = clash
        entry["outputs"][-1] = clash
        assert f"'{clash}' is already {owner}" in _refused(doc)


def test_non_finite_fill_is_refused_in_the_file_and_in_memory():
    text = GOLDEN_LOG.read_text(encoding="utf-8").replace('"fill": 170.0', '"fill": NaN')
    with pytest.raises(LogProblem, match=r"recodings\[16\]\.missing\.fill: NaN is not allowed"):
        recodings.loads(text, "log.json")
    text = GOLDEN_LOG.read_text(encoding="utf-8").replace('"fill": 170.0', '"fill": 1e999')
    with pytest.raises(LogProblem, match=r"recodings\[16\]\.missing\.fill: number too large"):
        recodings.loads(text, "log.json")
    bad = Decision.make("x", make_recoding("linear", {}, None, MissingFill(float("nan"))), (0, 1))
    with pytest.raises(LogProblem, match="missing.fill"):
        recodings.dumps(_log(bad))
    with pytest.raises(ValueError, match="missing.fill must be a finite number"):
        bad.recoding.validate()

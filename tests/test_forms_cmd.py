"""``bendwise forms``: one column's candidate table, with bootstrap shares on request.

The shares are bootstrap model-selection frequencies (Sauerbrei & Schumacher 1992; the
bootstrap: Efron & Tibshirani 1993); the sample cohort's planted shapes come from its
truth file (sample_data/planted_shapes.json).
"""

from __future__ import annotations

import json

import pytest
from conftest import SAMPLE

from tui.cli.main import main
from tui.recodings.evidence import Evidence, Selection

DATA = str(SAMPLE / "surgical_cohort.csv")
OUTCOME = "wound_infection_30d"
KEYS = {
    "form",
    "kind",
    "params",
    "df",
    "deviance",
    "aic",
    "delta_aic",
    "lr_p",
    "status",
    "notes",
    "share",
}


def _json(capsys, *extra: str) -> list[dict]:
    code = main(["forms", DATA, "--outcome", OUTCOME, "--format", "json", *extra])
    assert code == 0
    return json.loads(capsys.readouterr().out)


def test_json_rows_have_the_keys_and_no_shares_without_resamples(capsys):
    rows = _json(capsys, "--column", "bmi")
    assert rows[0]["kind"] == "linear" and rows[0]["delta_aic"] == 0.0
    assert all(set(r) == KEYS for r in rows)
    assert all(r["share"] is None for r in rows)
    by_kind = {r["kind"]: r for r in rows}
    assert by_kind["log"]["lr_p"] is None  # log does not nest linear
    # The one df rule: a searched cut point costs one df more than its outputs.
    assert by_kind["indicator"]["df"] == 2 and by_kind["hinge"]["df"] == 3


def test_shares_sum_to_one_repeat_with_the_seed_and_find_the_planted_bend(capsys):
    # bmi is planted as a U (truth file): the non-linear forms win nearly every resample.
    first = _json(capsys, "--column", "bmi", "--resamples", "40", "--seed", "3")
    again = _json(capsys, "--column", "bmi", "--resamples", "40", "--seed", "3")
    assert sum(r["share"] for r in first) == pytest.approx(1.0)
    assert [r["share"] for r in first] == [r["share"] for r in again]
    by_kind = {r["kind"]: r["share"] for r in first}
    assert by_kind["linear"] < 0.05
    assert sum(s for k, s in by_kind.items() if k not in ("linear", "log")) >= 0.9


def test_table_states_the_rules(capsys):
    assert main(["forms", DATA, "--outcome", OUTCOME, "--column", "height_cm"]) == 0
    out = capsys.readouterr().out
    assert "not nested in linear" in out and "searched" in out
    assert "linear adequate" in out  # no planted effect: no form named best
    assert "-0.0" not in out


@pytest.mark.parametrize(
    "args, words",
    [
        (["--column", "nope"], "has no column 'nope'"),
        (["--column", "ward"], "not numeric"),
        (["--column", "bmi", "--resamples", "0"], "resamples must be"),
    ],
)
def test_bad_input_is_one_line_and_exit_2(capsys, args, words):
    with pytest.raises(SystemExit) if "--resamples" in args else _nothing():
        code = main(["forms", DATA, "--outcome", OUTCOME, *args])
        assert code == 2
    assert words in capsys.readouterr().err


class _nothing:
    def __enter__(self):
        return self

    def __exit__(self, *exc):
        return False


def test_evidence_keeps_the_shares_and_older_evidence_has_none():
    evidence = Evidence(selection=Selection(200, 7, {"quadratic": 0.78, "spline": 0.22}))
    again = Evidence.from_json(evidence.to_json())
    assert again.selection == evidence.selection
    assert Evidence.from_json({"form": "linear"}).selection is None  # logs from before
    with pytest.raises(Exception, match="selection"):
        Evidence.from_json({"selection": {"resamples": 2, "seed": 0, "shares": {"x": 2}}})

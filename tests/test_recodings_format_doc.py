"""The format document beside the schema says what the code does (tui/recodings/FORMAT.md)."""

import re
from pathlib import Path

import pandas as pd
import pytest

from tui import recodings
from tui.engine.forms.registry import KINDS

FORMAT_DOC = Path(recodings.__file__).with_name("FORMAT.md")
TEXT = FORMAT_DOC.read_text(encoding="utf-8")


def _example() -> str:
    return re.search(r"```json\n(.*?)```", TEXT, re.DOTALL).group(1)


def test_the_example_loads_and_is_exactly_what_bendwise_writes():
    example = _example()
    log = recodings.loads(example, "FORMAT.md")
    assert recodings.dumps(log).replace(log.written_by, "bendwise 0.1.0") == example


def test_the_worked_row_gives_the_values_the_document_states():
    log = recodings.loads(_example(), "FORMAT.md")
    row = pd.DataFrame(
        {"bearing_temp_c": [50.0], "vibration_mm_s": [50.0], "months_since_service": [3.0]}
    )
    out = recodings.apply_to_frame(log, row).iloc[0]
    assert out["bearing_temp_c__lin"] == 50.0
    assert out["bearing_temp_c__spl1"] == pytest.approx(0.43905, abs=5e-6)
    assert out["bearing_temp_c__spl2"] == 0.0
    assert out["vibration_mm_s__log"] == pytest.approx(3.69013, abs=5e-6)
    assert out["months_since_service__below"] == 1.0


def test_every_kind_of_the_schema_and_the_registry_has_a_row():
    documented = set(re.findall(r"^\| `(\w+)` \| `\{", TEXT, re.MULTILINE))
    enum = recodings.schema()["$defs"]["recoding"]["properties"]["kind"]["enum"]
    assert documented == set(enum) == set(KINDS)


@pytest.mark.parametrize(
    "line", [ln for ln in TEXT.splitlines() if ln.startswith("pumps.recodings.json: ")]
)
def test_each_quoted_message_is_the_message_bendwise_gives(line):
    example = _example()
    broken = {
        "recodings[1].clp": example.replace('"clip"', '"clp"'),
        "recodings[0].params.knots": example.replace("55.0, 63.2", "63.2, 55.0"),
        "format_version": example.replace('"format_version": 1', '"format_version": 2'),
    }
    path = line.split(": ")[1]
    with pytest.raises(recodings.LogProblem) as problem:
        recodings.loads(broken[path], "pumps.recodings.json")
    assert str(problem.value) == line


def test_a_log_with_the_older_spline_names_replays_under_them_unchanged():
    # Outputs are stored per recoding: a log written when spline outputs were named
    # __rcs1, __rcs2 keeps those names through load, save, replay and SQL.
    old = _example().replace("bearing_temp_c__spl", "bearing_temp_c__rcs")
    log = recodings.loads(old, "old.json")
    assert recodings.dumps(log).replace(log.written_by, "bendwise 0.1.0") == old
    row = pd.DataFrame(
        {"bearing_temp_c": [50.0], "vibration_mm_s": [50.0], "months_since_service": [3.0]}
    )
    out = recodings.apply_to_frame(log, row).iloc[0]
    assert out["bearing_temp_c__rcs1"] == pytest.approx(0.43905, abs=5e-6)
    assert "bearing_temp_c__spl1" not in out.index
    assert '"bearing_temp_c__rcs2"' in recodings.to_sql(log, "duckdb", table="data")

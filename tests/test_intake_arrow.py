"""The pyarrow route of a Parquet file (outcome coding, column profiles, presence) gives
what the pandas route gives, column type by column type; reference library: pandas, as
``read_column`` hands the same column to ``code_outcome`` and ``profile_column``."""

from __future__ import annotations

import numpy as np
import pyarrow as pa
import pyarrow.parquet as pq
import pytest

from tui.intake.dataset import open_columnar
from tui.intake.outcome import code_outcome, code_outcome_arrow
from tui.intake.profile import profile_column
from tui.intake.readers import read_arrow, read_column
from tui.problems import InputProblem

# Invented scenario: parcels through a sorting hub, was each one misrouted?
ROWS = 60
INDEX = np.arange(ROWS)
COLUMNS = {
    "int01": pa.array(INDEX % 2),
    "int12": pa.array(INDEX % 2 + 1),
    "float01_gaps": pa.array([None if i % 7 == 0 else float(i % 2) for i in INDEX]),
    "float_nan": pa.array([np.nan if i % 5 == 0 else float(i % 2) for i in INDEX]),
    "bool": pa.array(INDEX % 3 == 0),
    "bool_gaps": pa.array([None if i % 4 == 0 else bool(i % 3) for i in INDEX]),
    "int_gaps": pa.array([None if i % 6 == 0 else int(i % 2) for i in INDEX], pa.int64()),
    "text": pa.array(["lost" if i % 3 else "kept" for i in INDEX]),
    "text_blanks": pa.array([[" ", "lost", None, "kept", "\t"][i % 5] for i in INDEX]),
    "large_text": pa.array(["a" if i % 2 else "b" for i in INDEX], pa.large_string()),
    "three": pa.array(INDEX % 3),
    "one": pa.array(np.ones(ROWS, dtype=np.int64)),
    "empty": pa.array([None] * ROWS, pa.float64()),
    "halves": pa.array((INDEX % 2) * 0.5),
    "f32": pa.array((INDEX % 2).astype(np.float32)),
    "u8": pa.array((INDEX % 2).astype(np.uint8)),
    "weight_inf": pa.array([np.inf if i == 3 else -np.inf if i == 4 else i / 3 for i in INDEX]),
}
EVENTS = [None, "1", "2", "lost", " Lost ", "true", "False", "0.5", "kept", "9"]


@pytest.fixture(scope="module")
def parcels(tmp_path_factory):
    path = tmp_path_factory.mktemp("hub") / "parcels.parquet"
    pq.write_table(pa.table(COLUMNS), path)
    return path


def _outcome(code):
    try:
        coded = code()
    except InputProblem as problem:
        return str(problem)
    return (coded.event, type(coded.event), coded.y.tolist(), coded.keep.tolist(),
            coded.events, coded.nonevents, coded.dropped_missing)  # fmt: skip


@pytest.mark.parametrize("name", list(COLUMNS))
@pytest.mark.parametrize("event", EVENTS)
def test_outcome_coded_as_pandas_codes_it(parcels, name, event):
    through_pandas = _outcome(
        lambda: code_outcome(read_column(parcels, name).to_frame(name), name, event)
    )
    through_arrow = _outcome(lambda: code_outcome_arrow(name, read_arrow(parcels, name), event))
    assert through_arrow == through_pandas


@pytest.mark.parametrize("outcome", ["int01", "float01_gaps", "bool_gaps", "text_blanks"])
def test_profiles_and_presence_as_pandas_gives_them(parcels, outcome):
    event = "lost" if outcome == "text_blanks" else None
    data = open_columnar(parcels, outcome, event, exclude=["three"])
    keep = data.outcome.keep
    found = {p.name: p for p in (*data.numeric, *data.skipped)}
    for name in COLUMNS:
        if name in (outcome, "three"):
            continue
        series = read_column(parcels, name)[keep].reset_index(drop=True)
        assert found[name] == profile_column(series, name), name
        assert data.present(name).tolist() == series.notna().tolist(), name
        if found[name].numeric:
            expected = series.to_numpy(dtype=float, na_value=np.nan, copy=True)
            expected[np.isinf(expected)] = np.nan
            np.testing.assert_array_equal(data.values(name), expected)

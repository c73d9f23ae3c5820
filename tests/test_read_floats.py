"""Parquet numbers read straight to floats equal the general reader's values, type by type."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from tui.intake.dataset import _raw_floats, open_columnar, open_whole
from tui.intake.readers import read_column, read_floats, read_floats_many


@pytest.fixture()
def stored(tmp_path):
    rows = 7
    frame = pd.DataFrame(
        {
            "y": [0, 1, 0, 1, None, 1, 0],
            "f64": [0.5, np.nan, np.inf, -np.inf, 2.0, -1.25, 3.0],
            "f32": np.array([0.1, 0.2, np.nan, 4, 5, 6, 7], dtype=np.float32),
            "i64": np.arange(rows, dtype=np.int64) * 3 - 4,
            "big": np.array([2**53 + 1, 2**60 + 3, 0, 1, -(2**62), 5, 6], dtype=np.int64),
            "u8": np.arange(rows, dtype=np.uint8),
            "nullable": pd.array([1, None, 3, 4, None, 6, 7], dtype="Int64"),
            "flag": [True, False, True, True, False, False, True],
            "gappy": pd.array([True, None, False, True, None, False, True], dtype="boolean"),
            "text": list("abcdefg"),
        }
    )
    path = tmp_path / "numbers.parquet"
    frame.to_parquet(path)
    return path


NUMERIC = ["f64", "f32", "i64", "big", "u8", "nullable", "flag", "gappy"]


@pytest.mark.parametrize("name", NUMERIC)
def test_same_floats_as_the_general_reader(stored, name):
    fast = read_floats(stored, name)
    assert fast is not None and fast.dtype == np.float64
    general = _raw_floats(read_column(stored, name))
    np.testing.assert_array_equal(fast, general)  # NaN equal to NaN, ±inf kept


def test_other_types_and_formats_fall_back(stored, tmp_path):
    assert read_floats(stored, "text") is None
    csv = tmp_path / "numbers.csv"
    pd.read_parquet(stored).to_csv(csv, index=False)
    assert read_floats(csv, "f64") is None


def test_columnar_values_match_a_whole_read(stored):
    # The outcome's missing row is dropped the same way on both paths.
    columnar = open_columnar(stored, "y")
    whole = open_whole(stored, "y")
    for name in NUMERIC:
        np.testing.assert_array_equal(columnar.raw_values(name), whole.raw_values(name))


def test_several_columns_in_one_read_equal_one_at_a_time(stored):
    # Text gives None as read_floats does; a name asked twice comes back as its own copy.
    names = ["f64", "text", "big", "gappy", "f64"]
    many = read_floats_many(stored, names)
    assert many[1] is None
    for name, got in zip(names, many, strict=True):
        if name != "text":
            np.testing.assert_array_equal(got, read_floats(stored, name))
    assert many[0] is not many[4]
    columnar = open_columnar(stored, "y")
    for name, got in zip(NUMERIC, columnar.raw_values_many(NUMERIC), strict=True):
        np.testing.assert_array_equal(got, columnar.raw_values(name))
    (text,) = columnar.raw_values_many(["text"])  # the general reader's path
    np.testing.assert_array_equal(text, columnar.raw_values("text"))

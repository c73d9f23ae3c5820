"""Column profiles: counts, ranges, which columns are scanned and which are skipped."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from tui.intake import ColumnProfile, numeric_values, profile_column, profile_frame
from tui.problems import InputProblem

# Invented scenario: bicycles returned to a rental dock, was each one late?


def test_infinities_count_as_nonfinite_and_missing() -> None:
    series = pd.Series([1.5, np.inf, np.nan, -np.inf, 4.0, 1.5])
    profile = profile_column(series, "speed")
    assert profile.rows == 6
    assert profile.n == 3
    assert profile.nonfinite == 2
    assert profile.missing == 3
    assert profile.distinct == 2
    assert (profile.minimum, profile.maximum) == (1.5, 4.0)
    values = numeric_values(series)
    assert values.dtype == np.float64
    assert np.isnan(values).tolist() == [False, True, True, True, False, False]


def test_distinct_minimum_maximum_and_whole_numbers() -> None:
    profile = profile_column(pd.Series([7, 3, 3, 12, -2, 7]), "gears")
    assert isinstance(profile, ColumnProfile)
    assert profile.numeric and profile.dtype == "int64"
    assert profile.distinct == 4
    assert profile.minimum == -2.0 and profile.maximum == 12.0
    assert isinstance(profile.minimum, float)
    assert profile.integer_valued
    assert (profile.n, profile.missing, profile.nonfinite) == (6, 0, 0)


def test_fractions_are_not_integer_valued() -> None:
    assert not profile_column(pd.Series([1.0, 2.5, 3.0]), "km").integer_valued
    assert profile_column(pd.Series([1.0, 2.0, np.nan]), "km").integer_valued


def test_booleans_are_numeric_zero_one() -> None:
    profile = profile_column(pd.Series([True, False, True, True]), "helmet")
    assert profile.numeric
    assert (profile.minimum, profile.maximum, profile.distinct) == (0.0, 1.0, 2)
    assert profile.integer_valued
    assert numeric_values(pd.Series([True, False])).tolist() == [1.0, 0.0]


def test_nullable_booleans_integers_and_floats() -> None:
    flags = pd.Series(pd.array([True, None, False], dtype="boolean"))
    counts = pd.Series(pd.array([4, None, 9, 4], dtype="Int64"))
    ratios = pd.Series(pd.array([0.5, None, 1.25], dtype="Float64"))

    flag_values = numeric_values(flags)
    assert flag_values[0] == 1.0 and math.isnan(flag_values[1]) and flag_values[2] == 0.0

    count_profile = profile_column(counts, "stops")
    assert count_profile.numeric and count_profile.dtype == "Int64"
    assert (count_profile.n, count_profile.missing, count_profile.distinct) == (3, 1, 2)
    assert (count_profile.minimum, count_profile.maximum) == (4.0, 9.0)
    assert count_profile.integer_valued

    ratio_values = numeric_values(ratios)
    assert ratio_values.dtype == np.float64
    assert ratio_values[0] == 0.5 and math.isnan(ratio_values[1]) and ratio_values[2] == 1.25


def test_all_missing_numeric_column() -> None:
    profile = profile_column(pd.Series([np.nan, np.inf, np.nan]), "empty")
    assert profile.numeric
    assert (profile.n, profile.missing, profile.nonfinite, profile.distinct) == (0, 3, 1, 0)
    assert profile.minimum is None and profile.maximum is None
    assert not profile.integer_valued


def test_text_column_profile() -> None:
    profile = profile_column(pd.Series(["red", "blue", None, "red"]), "colour")
    assert not profile.numeric
    assert (profile.n, profile.missing, profile.distinct) == (3, 1, 2)
    assert profile.minimum is None and profile.maximum is None


def test_dates_are_not_numeric() -> None:
    dates = pd.Series(pd.to_datetime(["2024-03-01", "2024-03-02"]))
    assert not profile_column(dates, "returned").numeric


def test_numeric_values_of_text_is_an_input_problem() -> None:
    with pytest.raises(InputProblem, match="column 'colour' is not numeric"):
        numeric_values(pd.Series(["red", "blue"], name="colour"))


def test_numeric_values_leaves_the_input_alone() -> None:
    series = pd.Series([1.0, np.inf])
    numeric_values(series)
    assert series.tolist() == [1.0, np.inf]


RENTALS = pd.DataFrame(
    {
        "late": [0, 1, 0, 1],
        "distance": [2.5, 11.0, np.inf, 7.25],
        "colour": ["red", "blue", "red", None],
        "rider_id": [501, 502, 503, 504],
        "helmet": [True, False, True, True],
        "dock": ["A", "B", "A", "C"],
    }
)


def test_frame_splits_scanned_from_skipped_in_file_order() -> None:
    scan, skipped = profile_frame(RENTALS, "late")
    assert [p.name for p in scan] == ["distance", "rider_id", "helmet"]
    assert [p.name for p in skipped] == ["colour", "dock"]
    assert all(p.numeric for p in scan) and not any(p.numeric for p in skipped)
    distance = scan[0]
    assert (distance.rows, distance.n, distance.nonfinite, distance.missing) == (4, 3, 1, 1)


def test_frame_leaves_out_excluded_columns() -> None:
    scan, skipped = profile_frame(RENTALS, "late", exclude=["rider_id", "dock"])
    assert [p.name for p in scan] == ["distance", "helmet"]
    assert [p.name for p in skipped] == ["colour"]


def test_excluding_unknown_columns_names_them() -> None:
    with pytest.raises(InputProblem) as caught:
        profile_frame(RENTALS, "late", exclude=["rider_di", "saddle", "dock"])
    assert str(caught.value) == (
        "excluded columns not found: 'rider_di' (closest: rider_id), 'saddle'"
    )


def test_frame_with_absent_outcome() -> None:
    with pytest.raises(InputProblem, match="outcome column 'overdue' not found"):
        profile_frame(RENTALS, "overdue")


def test_frame_with_repeated_column_names() -> None:
    df = pd.DataFrame([[0, 1.0, 2.0], [1, 3.0, 4.0]], columns=["late", "km", "km"])
    with pytest.raises(InputProblem, match="column names appear more than once: 'km'"):
        profile_frame(df, "late")


def test_profiles_count_only_the_rows_passed_in() -> None:
    # The caller filters to rows with an outcome; the profile must describe only those.
    df = pd.DataFrame({"late": [0, np.nan, 1, np.nan], "km": [1.0, 50.0, 3.0, np.inf]})
    kept = df[df["late"].notna()]
    (km,), _ = profile_frame(kept, "late")
    assert (km.rows, km.n, km.nonfinite, km.maximum) == (2, 2, 0, 3.0)

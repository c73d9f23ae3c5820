"""Coding the outcome as 0/1, and one clear message for each outcome that cannot be coded."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from tui.intake import CodedOutcome, code_outcome
from tui.problems import InputProblem

# Invented scenario: delivery vans in a depot, did each van break down this quarter?


def test_integer_zero_one_counts_one_as_event() -> None:
    df = pd.DataFrame({"breakdown": [0, 1, 1, 0, 1], "km": [10, 20, 30, 40, 50]})
    coded = code_outcome(df, "breakdown")
    assert isinstance(coded, CodedOutcome)
    assert coded.column == "breakdown"
    assert coded.event == 1 and type(coded.event) is int
    assert coded.y.dtype == np.int8
    assert coded.y.tolist() == [0, 1, 1, 0, 1]
    assert coded.keep.dtype == bool and coded.keep.all()
    assert (coded.events, coded.nonevents, coded.dropped_missing) == (3, 2, 0)


def test_float_zero_one_with_missing_rows_dropped_and_counted() -> None:
    df = pd.DataFrame({"breakdown": [1.0, np.nan, 0.0, 1.0, None, 0.0]})
    coded = code_outcome(df, "breakdown")
    assert coded.event == 1 and type(coded.event) is int
    assert coded.keep.tolist() == [True, False, True, True, False, True]
    assert coded.y.tolist() == [1, 0, 1, 0]
    assert (coded.events, coded.nonevents, coded.dropped_missing) == (2, 2, 2)


def test_booleans_count_true_as_event() -> None:
    coded = code_outcome(pd.DataFrame({"failed": [True, False, False, True]}), "failed")
    assert coded.event is True
    assert coded.y.tolist() == [1, 0, 0, 1]


def test_nullable_booleans_drop_missing() -> None:
    df = pd.DataFrame({"failed": pd.array([True, None, False, True], dtype="boolean")})
    coded = code_outcome(df, "failed")
    assert coded.event is True
    assert coded.keep.tolist() == [True, False, True, True]
    assert coded.y.tolist() == [1, 0, 1]
    assert coded.dropped_missing == 1


def test_nullable_integers() -> None:
    df = pd.DataFrame({"breakdown": pd.array([0, 1, None, 1], dtype="Int64")})
    coded = code_outcome(df, "breakdown")
    assert coded.y.tolist() == [0, 1, 1]
    assert coded.dropped_missing == 1


def test_event_can_choose_zero_on_a_zero_one_outcome() -> None:
    coded = code_outcome(pd.DataFrame({"breakdown": [0, 1, 1, 0, 0]}), "breakdown", event="0")
    assert coded.event == 0
    assert coded.y.tolist() == [1, 0, 0, 1, 1]
    assert (coded.events, coded.nonevents) == (3, 2)


def test_text_levels_with_named_event() -> None:
    df = pd.DataFrame({"status": ["running", "broken", None, "running", "broken"]})
    coded = code_outcome(df, "status", event="broken")
    assert coded.event == "broken"
    assert coded.y.tolist() == [0, 1, 0, 1]
    assert coded.dropped_missing == 1


def test_event_matches_text_ignoring_case_when_unambiguous() -> None:
    df = pd.DataFrame({"status": ["Yes", "No", "Yes"]})
    coded = code_outcome(df, "status", event="yes")
    assert coded.event == "Yes"
    assert coded.y.tolist() == [1, 0, 1]


def test_event_matches_numbers_numerically() -> None:
    # Codes 1/2, stored as floats: "--event 2" must find 2.0.
    df = pd.DataFrame({"grade": [1.0, 2.0, 2.0, 1.0]})
    coded = code_outcome(df, "grade", event="2")
    assert coded.event == 2 and type(coded.event) is int
    assert coded.y.tolist() == [0, 1, 1, 0]
    assert code_outcome(df, "grade", event="1.0").y.tolist() == [1, 0, 0, 1]


def test_event_text_names_a_boolean_level() -> None:
    df = pd.DataFrame({"failed": [True, False, True]})
    assert code_outcome(df, "failed", event="false").y.tolist() == [0, 1, 0]
    assert code_outcome(df, "failed", event="1").y.tolist() == [1, 0, 1]


def test_categorical_outcome_uses_observed_levels() -> None:
    values = pd.Categorical(["ok", "fault", "ok"], categories=["ok", "fault", "unused"])
    coded = code_outcome(pd.DataFrame({"check": values}), "check", event="fault")
    assert coded.y.tolist() == [0, 1, 0]


def test_coded_arrays_cannot_be_changed() -> None:
    coded = code_outcome(pd.DataFrame({"breakdown": [0, 1]}), "breakdown")
    with pytest.raises(ValueError):
        coded.y[0] = 1
    with pytest.raises(ValueError):
        coded.keep[0] = False


def test_absent_column_suggests_closest_names() -> None:
    df = pd.DataFrame({"breakdown": [0, 1], "breakage": [1, 2], "km": [3, 4]})
    with pytest.raises(InputProblem) as caught:
        code_outcome(df, "breakdwon")
    message = str(caught.value)
    assert message.startswith("outcome column 'breakdwon' not found; closest: breakdown")
    assert "km" not in message


def test_absent_column_with_nothing_close() -> None:
    df = pd.DataFrame({"km": [3, 4]})
    with pytest.raises(InputProblem) as caught:
        code_outcome(df, "breakdown")
    assert str(caught.value) == "outcome column 'breakdown' not found"


def test_only_one_level() -> None:
    df = pd.DataFrame({"breakdown": [1, 1, None, 1]})
    with pytest.raises(InputProblem) as caught:
        code_outcome(df, "breakdown")
    assert str(caught.value) == "outcome column 'breakdown' has only one value (1); it needs two"


def test_all_missing() -> None:
    df = pd.DataFrame({"breakdown": [np.nan, np.nan]})
    with pytest.raises(InputProblem, match="'breakdown' has no non-missing values"):
        code_outcome(df, "breakdown")


def test_more_than_two_levels_says_how_many_and_shows_some() -> None:
    df = pd.DataFrame({"severity": ["low", "mid", "high", "low"]})
    with pytest.raises(InputProblem) as caught:
        code_outcome(df, "severity")
    assert str(caught.value) == (
        "outcome column 'severity' has 3 distinct values ('high', 'low', 'mid'); "
        "it needs exactly two"
    )


def test_many_levels_are_shown_only_in_part() -> None:
    df = pd.DataFrame({"odometer": list(range(40))})
    with pytest.raises(InputProblem) as caught:
        code_outcome(df, "odometer", event="3")
    assert "has 40 distinct values (0, 1, 2, 3, 4, ...)" in str(caught.value)


def test_two_text_levels_without_event_lists_them_and_names_the_option() -> None:
    df = pd.DataFrame({"status": ["running", "broken", "running"]})
    with pytest.raises(InputProblem) as caught:
        code_outcome(df, "status")
    message = str(caught.value)
    assert "'broken' and 'running'" in message
    assert "--event" in message


def test_two_numbers_other_than_zero_one_need_an_event() -> None:
    df = pd.DataFrame({"grade": [1, 2, 2]})
    with pytest.raises(InputProblem, match="has two values, 1 and 2; name the event with --event"):
        code_outcome(df, "grade")


def test_suggested_event_is_quoted_when_it_has_spaces() -> None:
    df = pd.DataFrame({"status": ["in service", "written off"]})
    with pytest.raises(InputProblem, match="--event 'written off'"):
        code_outcome(df, "status")


def test_event_that_is_not_a_level() -> None:
    df = pd.DataFrame({"status": ["running", "broken", "running"]})
    with pytest.raises(InputProblem) as caught:
        code_outcome(df, "status", event="stolen")
    assert str(caught.value) == (
        "--event 'stolen' is not a value of outcome column 'status' "
        "(its values are 'broken' and 'running')"
    )


def test_event_number_that_is_not_a_level() -> None:
    with pytest.raises(InputProblem, match="--event '2' is not a value"):
        code_outcome(pd.DataFrame({"breakdown": [0, 1]}), "breakdown", event="2")

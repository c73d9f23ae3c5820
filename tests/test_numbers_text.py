"""One number text for every surface: the command line, the screens and the report."""

import math

import pytest

from tui.app import text as app_text
from tui.numbers_text import EN_DASH, HYPHEN, is_number, number_text, p_text, value_text
from tui.report.numbers import fmt, fmt_p, fmt_x


@pytest.mark.parametrize("missing", [None, math.nan, math.inf, -math.inf])
def test_no_number_is_a_dash(missing):
    assert not is_number(missing)
    assert number_text(missing) == p_text(missing) == value_text(missing) == HYPHEN
    assert fmt(missing) == fmt_p(missing) == fmt_x(missing) == EN_DASH


def test_fixed_decimals():
    assert number_text(12.345) == "12.3"  # the table and screen default: one decimal
    assert number_text(-0.04) == "0.0"  # never -0.0
    assert number_text(2.0, 3) == "2.000"
    assert fmt(12.345) == "12.35" and fmt(0.12345, 3) == "0.123"  # the report: two


def test_p_values_below_the_floor_and_at_it():
    assert p_text(0.00009) == "<0.0001" == fmt_p(0.00009)
    assert p_text(0.0001) == "0.0001"
    assert p_text(0.04567) == "0.0457"
    assert p_text(1.0) == "1.0000"
    assert p_text(0.0) == "<0.0001"


def test_data_values_to_significant_digits():
    assert value_text(12.5000001) == "12.5"  # six digits on the screens
    assert value_text(1234567.0) == "1.23457e+06"
    assert fmt_x(1234.5678) == "1235"  # four in the report
    assert fmt_x(0.000123456) == "0.0001235"


def test_the_screens_use_the_same_functions():
    assert app_text.number_text is number_text
    assert app_text.p_text is p_text
    assert app_text.value_text is value_text
    assert app_text.is_number is is_number


def test_a_value_that_rounds_to_zero_has_no_sign():
    assert number_text(-0.04) == "0.0" and number_text(-0.0) == "0.0"
    assert number_text(-0.05, 1) == "-0.1" and number_text(-0.004, 2) == "0.00"
    assert number_text(-12.0) == "-12.0"

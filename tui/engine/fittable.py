"""The rules a column must pass before forms are compared on it (scan and inspection alike)."""

from __future__ import annotations

from tui.engine.counts import ReducedCounts

CURVE_VALUES = 3
"""Distinct values needed for a curve: through two values (or one) only a line passes."""


def one_outcome_class(counts: ReducedCounts) -> bool:
    """Every row with a value has the same outcome: no form can be fitted."""
    return counts.total_events == 0 or counts.total_events == counts.rows


def too_few_values(counts: ReducedCounts) -> bool:
    """Two distinct values or fewer: nothing but the linear form applies."""
    return counts.distinct_values < CURVE_VALUES


def why_linear_only(counts: ReducedCounts) -> str:
    """The words shown when ``too_few_values``: what a column of one or two values allows."""
    if counts.distinct_values == 1:
        return "one value only: nothing to compare; set it aside (x)"
    return "two values only: a straight line joins them, so only linear applies"


NO_VALUES = "no finite values"
ONE_CLASS = "every row has the same outcome: no form can be fitted"

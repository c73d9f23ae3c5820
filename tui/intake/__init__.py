"""Intake: read data files, code the outcome, profile the columns. Knows nothing of screens."""

from tui.intake.outcome import CodedOutcome, code_outcome
from tui.intake.profile import (
    ColumnProfile,
    is_numeric_column,
    numeric_values,
    profile_column,
    profile_frame,
)
from tui.intake.readers import (
    SUPPORTED,
    drop_cached_table,
    list_columns,
    read_column,
    read_table,
)

__all__ = [
    "SUPPORTED",
    "CodedOutcome",
    "ColumnProfile",
    "code_outcome",
    "drop_cached_table",
    "is_numeric_column",
    "list_columns",
    "numeric_values",
    "profile_column",
    "profile_frame",
    "read_column",
    "read_table",
]

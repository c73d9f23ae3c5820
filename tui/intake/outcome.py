"""Code the outcome column as 0/1, dropping rows where it is missing."""

from __future__ import annotations

import shlex
from collections.abc import Callable
from dataclasses import dataclass
from numbers import Number
from typing import TYPE_CHECKING, Any

import numpy as np

from tui.intake import arrow_columns
from tui.names import closest_names
from tui.problems import InputProblem

if TYPE_CHECKING:
    import pandas as pd


@dataclass(frozen=True, eq=False)  # eq=False: comparing arrays field by field is ambiguous
class CodedOutcome:
    """A two-level outcome coded 1 for the event and 0 otherwise, over the rows that have it."""

    column: str
    """Name of the outcome column."""
    event: object
    """The value counted as the event, as a plain Python value (1, True, 'dead', ...)."""
    y: np.ndarray
    """int8 array of 0/1, one entry per kept row, in row order."""
    keep: np.ndarray
    """bool mask over the input rows: True where the outcome is present."""
    dropped_missing: int
    """Rows dropped because the outcome is missing."""
    events: int
    """Kept rows coded 1."""
    nonevents: int
    """Kept rows coded 0."""


def code_outcome(df: pd.DataFrame, column: str, event: str | None = None) -> CodedOutcome:
    """Code ``df[column]`` as 0/1.

    Accepts 0/1 numbers, booleans (event 1/True unless ``event`` says otherwise), or any two
    distinct values with ``event`` naming the event. ``event`` comes from the command line as
    text, so it is matched against the values as text and, for numbers, numerically too.
    Raises ``InputProblem`` when the column is absent or does not have exactly two values.
    """
    import pandas as pd

    names = [str(name) for name in df.columns]
    check_outcome_name(column, names)
    values = df.iloc[:, names.index(column)]
    keep = values.notna().to_numpy(dtype=bool)
    kept = values[keep]
    return _coded(
        column,
        event,
        keep,
        pd.unique(kept),
        lambda raw: (kept == raw).to_numpy(dtype=bool),
    )


def code_outcome_arrow(column: str, array: Any, event: str | None = None) -> CodedOutcome | None:
    """``code_outcome`` of a Parquet column read by pyarrow (``read_arrow``), with the same
    rules and messages; None for a stored type that only pandas judges."""
    if arrow_columns.kind_of(array) is None:
        return None
    keep = arrow_columns.present(array)
    kept = arrow_columns.kept_values(array, keep)
    return _coded(
        column,
        event,
        keep,
        arrow_columns.distinct(kept),
        lambda raw: arrow_columns.equal_to(kept, raw),
    )


def check_outcome_name(column: str, names: list[str]) -> None:
    """Raise InputProblem when ``column`` is not one of ``names``, or is there twice."""
    if column not in names:
        near = closest_names(column, names)
        hint = f"; closest: {', '.join(near)}" if near else ""
        raise InputProblem(f"outcome column '{column}' not found{hint}")
    if names.count(column) > 1:
        raise InputProblem(f"outcome column '{column}' appears more than once in the file")


def _coded(
    column: str,
    event: str | None,
    keep: np.ndarray,
    found: Any,
    equal: Callable[[Any], np.ndarray],
) -> CodedOutcome:
    """Code the kept rows from their distinct values ``found`` (as the column holds
    them); ``equal(raw)`` marks the kept rows holding ``raw``."""
    # Each distinct value as found in the column, paired with its plain Python form.
    levels = {_plain(raw): raw for raw in found}

    if len(levels) == 0:
        raise InputProblem(f"outcome column '{column}' has no non-missing values")
    if len(levels) == 1:
        (only,) = levels
        raise InputProblem(
            f"outcome column '{column}' has only one value ({_show(only)}); it needs two"
        )
    ordered = _ordered(levels)
    if len(levels) > 2:
        shown = ", ".join(_show(level) for level in ordered[:5])
        more = ", ..." if len(ordered) > 5 else ""
        raise InputProblem(
            f"outcome column '{column}' has {len(levels)} distinct values ({shown}{more}); "
            "it needs exactly two"
        )

    if event is None:
        chosen = _default_event(ordered)
        if chosen is None:
            first, second = (_show(level) for level in ordered)
            raise InputProblem(
                f"outcome column '{column}' has two values, {first} and {second}; "
                f"name the event with --event (for example --event {_bare(ordered[1])})"
            )
    else:
        chosen = _match_event(event, ordered)
        if chosen is None:
            first, second = (_show(level) for level in ordered)
            raise InputProblem(
                f"--event '{event}' is not a value of outcome column '{column}' "
                f"(its values are {first} and {second})"
            )

    y = equal(levels[chosen]).astype(np.int8)
    y.setflags(write=False)
    keep.setflags(write=False)
    events = int(y.sum())
    return CodedOutcome(
        column=column,
        event=chosen,
        y=y,
        keep=keep,
        dropped_missing=int(len(keep) - keep.sum()),
        events=events,
        nonevents=int(len(y) - events),
    )


def _plain(raw: Any) -> Any:
    """A numpy or pandas scalar as a plain Python value; whole floats become ints (1.0 -> 1)."""
    value = raw.item() if isinstance(raw, np.generic) else raw
    if isinstance(value, float) and value.is_integer():
        return int(value)
    return value


def _is_number(value: Any) -> bool:
    return isinstance(value, Number)


def _default_event(levels: list[Any]) -> Any | None:
    """1 (or True) when the two levels are 0/1 or False/True; otherwise no default."""
    if all(_is_number(level) for level in levels) and set(levels) == {0, 1}:
        return next(level for level in levels if level == 1)
    return None


def _match_event(event: str, levels: list[Any]) -> Any | None:
    """The level that the command-line text ``event`` names, or None."""
    exact = [level for level in levels if str(level) == event]
    if exact:
        return exact[0]
    # "--event 1" must find 1.0 or True; "--event true" must find True.
    try:
        number = float(event)
    except ValueError:
        number = None
    if number is not None:
        numeric = [level for level in levels if _is_number(level) and level == number]
        if len(numeric) == 1:
            return numeric[0]
    loose = [level for level in levels if str(level).strip().lower() == event.strip().lower()]
    return loose[0] if len(loose) == 1 else None


def _ordered(levels: dict[Any, Any]) -> list[Any]:
    try:
        return sorted(levels)
    except TypeError:  # mixed types, e.g. numbers and text in one object column
        return sorted(levels, key=str)


def _show(level: Any) -> str:
    return repr(level) if isinstance(level, str) else str(level)


def _bare(level: Any) -> str:
    """The level as it would be typed after --event, quoted for the shell when needed."""
    return shlex.quote(str(level))

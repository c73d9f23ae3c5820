"""Rows fetched from a source for the checks that need them (covariates, weights): only
the named columns, only rows with an outcome, and never more than a stated row cap (the
fetch is refused above it, with one line). The rows then go the file path's way."""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

from tui.intake.dataset import Dataset
from tui.intake.outcome import code_outcome
from tui.intake.profile import profile_frame
from tui.intake.sources.base import Source
from tui.problems import InputProblem

DEFAULT_ROW_CAP = 1_000_000
"""Rows a command fetches from a source at most (``--row-cap``): about 8 MB a column."""


def needed_columns(
    source: Source, outcome: str, exclude: Sequence[str], also: Sequence[str]
) -> list[str]:
    """The numeric columns a scan reviews (not the outcome, not excluded), then ``also``
    (covariates, a weight) in the order given; text columns are left in the engine."""
    columns = source.columns()
    every = [c.name for c in columns]
    unknown = [n for n in [*exclude, *also] if n not in every]
    if unknown:
        raise InputProblem(f"{source.label} has no column(s) {', '.join(map(repr, unknown))}")
    numeric = [c.name for c in columns if c.numeric and c.name != outcome and c.name not in exclude]
    return list(dict.fromkeys([*numeric, *also]))


def fetched_dataset(
    source: Source,
    outcome: str,
    event: str | None,
    names: Sequence[str],
    cap: int = DEFAULT_ROW_CAP,
) -> Dataset:
    """The outcome and ``names`` for every row with an outcome (at most ``cap`` rows,
    else InputProblem), as a ``Dataset`` named after the source's table or query."""
    source.code_outcome(outcome, event)  # the engine's messages for a bad outcome
    frame = source.fetch([n for n in names if n != outcome], cap)
    coded = code_outcome(frame, outcome, event)
    kept = frame.loc[coded.keep].reset_index(drop=True)
    numeric, skipped = profile_frame(kept, outcome, ())
    name = source.origin.table or "query"
    return Dataset(Path(name), kept, coded, tuple(numeric), tuple(skipped), ())

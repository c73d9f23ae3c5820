"""What a data source hands the scan: names and types, the coded outcome, and per column
the counts reduced inside the engine. Nothing row-level ever leaves the engine.

A source is a table or query in a database engine (DuckDB, PostgreSQL, Spark). Its
reduction (``reduce.py``) is a few GROUP BY and quantile queries whose answers are small:
per distinct value or per bin, rows and events. The engine side turns them into the same
counts a file scan builds (``tui.engine.pushed``).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Protocol

import numpy as np

if TYPE_CHECKING:
    import pandas as pd


@dataclass(frozen=True)
class SourceColumn:
    """One column of a source."""

    name: str
    """Column name as the engine spells it."""
    type: str
    """The engine's type name."""
    numeric: bool
    """Numbers or booleans (booleans count as 0/1), as for a file."""


@dataclass(frozen=True)
class BinPlan:
    """How a column is reduced; the engine side fills it in so that a source bins exactly
    as a file scan does (``tui.engine.counts``)."""

    max_levels: int
    """Distinct values kept exactly before binning."""
    exact_below: int
    """Below this many rows a column is always reduced exactly."""
    tail_rows: int
    """Rows at each end of a binned column that keep their own value."""
    grid: int
    """Points of the quantile grid a binned column keeps (linspace(0, 1, grid))."""


@dataclass(frozen=True)
class PushedColumn:
    """A numeric column reduced inside the engine: plain numbers only."""

    name: str
    """Column name."""
    rows: int
    """Rows with an outcome."""
    present: int
    """Rows with a finite value."""
    nonfinite: int
    """Rows holding +inf or -inf."""
    integer_valued: bool
    """Every finite value is whole (and there is one)."""
    x: np.ndarray
    """Distinct values (exact) or bin means (binned), ascending."""
    trials: np.ndarray
    """Rows at each x."""
    events: np.ndarray
    """Event rows at each x."""
    exact: bool
    """x holds every distinct value."""
    distinct: int
    """Distinct finite values."""
    low: float | None
    """Smallest finite value."""
    high: float | None
    """Largest finite value."""
    gap: float | None = None
    """Binned only: smallest positive step between distinct values."""
    grid: np.ndarray | None = None
    """Binned only: quantiles at linspace(0, 1, plan.grid)."""


@dataclass(frozen=True)
class OtherColumn:
    """A column that is not numeric: listed with its counts, not scanned."""

    name: str
    """Column name."""
    rows: int
    """Rows with an outcome."""
    present: int
    """Rows where the column holds a value."""
    events: int
    """Event rows among the present ones."""
    distinct: int
    """Distinct values."""


@dataclass(frozen=True)
class SourceOutcome:
    """The outcome as the engine counted it (coded with ``tui.intake.outcome`` rules)."""

    column: str
    """Outcome column."""
    event: object
    """The value counted as the event."""
    events: int
    """Rows coded 1."""
    nonevents: int
    """Rows coded 0."""
    dropped_missing: int
    """Rows without an outcome."""

    @property
    def rows(self) -> int:
        """Rows with an outcome."""
        return self.events + self.nonevents


@dataclass(frozen=True)
class SourceOrigin:
    """Where a source's rows live, without any secret: what the log records."""

    engine: str
    """``duckdb``, ``postgresql`` or ``spark``."""
    host: str | None = None
    """Server host and port (PostgreSQL) or Spark master; None for a local file."""
    database: str | None = None
    """Database name, or the DuckDB file's name."""
    table: str | None = None
    """Table (or file read in place) named by the command."""
    query_sha256: str | None = None
    """SHA-256 hex of the query text as given, when the rows come from a query."""


def query_hash(query: str | None) -> str | None:
    """SHA-256 hex of a query's text (UTF-8, exactly as given), or None."""
    import hashlib

    return None if query is None else hashlib.sha256(query.encode()).hexdigest()


class Source(Protocol):
    """A table or query in an engine, opened for scanning."""

    label: str
    """Where the data live, without any secret (engine, host, database, table)."""
    origin: SourceOrigin
    """The same, as fields for the log."""

    def columns(self) -> list[SourceColumn]:
        """Every column, in the engine's order."""
        ...

    def code_outcome(self, column: str, event: str | None) -> SourceOutcome:
        """Code the outcome with the file rules (exactly two values, --event)."""
        ...

    def reduce(
        self, outcome: SourceOutcome, names: list[str], plan: BinPlan
    ) -> tuple[list[PushedColumn], list[OtherColumn]]:
        """Reduce the named columns (numeric ones to counts, others to a listing)."""
        ...

    def tally(
        self, thresholds: Mapping[str, Sequence[float]]
    ) -> dict[str, tuple[int, np.ndarray, np.ndarray]]:
        """Per column: finite rows, and rows below and at or below each threshold."""
        ...

    def fingerprint(self, names: Sequence[str]) -> tuple[int, str]:
        """(rows with an outcome, SHA-256 of engine-computed counts and sums)."""
        ...

    def fetch(self, names: Sequence[str], cap: int) -> pd.DataFrame:
        """Outcome and named columns of every row with an outcome; refused above ``cap``."""
        ...

    def close(self) -> None:
        """Release the connection."""
        ...

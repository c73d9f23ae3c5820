"""The recoding log in memory: what was decided for each column, and on which data."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from datetime import UTC, datetime
from typing import Any

from tui import __version__
from tui.engine.forms.base import Recoding
from tui.recodings.evidence import NOTHING, Evidence

FORMAT = "bendwise-recodings"
FORMAT_VERSION = 1


def now_iso() -> str:
    """Current UTC time, ISO 8601, to the second."""
    return datetime.now(UTC).replace(microsecond=0).isoformat()


@dataclass(frozen=True)
class Decision:
    """One accepted recoding of one column (keeping it linear is a decision too)."""

    column: str
    """Source column in the data."""
    recoding: Recoding
    """Kind, learned numbers and optional clip."""
    outputs: tuple[str, ...]
    """Names of the derived columns, in output order."""
    range: tuple[float, float]
    """Smallest and largest training value of the source column."""
    deciles: tuple[float, ...] | None = None
    """The 10th to 90th percentiles of the training column (ascending), for checking the
    drift of a later extract; None in logs written before they were recorded."""
    note: str = ""
    """The analyst's reason."""
    decided_at: str = field(default_factory=now_iso)
    """When the decision was made (ISO 8601)."""
    decided_by: str | None = None
    """Who made it (login name or ``--analyst``); None in logs that did not record it."""
    evidence: Evidence = NOTHING
    """What was shown when it was accepted, and the design it was judged in."""

    @property
    def missing_indicator(self) -> str | None:
        """The output that flags a missing x, when the recoding adds one (always last)."""
        rule = self.recoding.missing
        return self.outputs[-1] if rule is not None and rule.indicator else None

    @classmethod
    def make(
        cls,
        column: str,
        recoding: Recoding,
        training_range: tuple[float, float],
        note: str = "",
        evidence: Evidence | Mapping[str, Any] | None = None,
        taken: set[str] | frozenset[str] = frozenset(),
        deciles: tuple[float, ...] | None = None,
        decided_by: str | None = None,
    ) -> Decision:
        """A decision whose output names avoid the names in ``taken``; ``evidence`` given
        as JSON values is read as a log entry's would be (raises EntryProblem)."""
        if evidence is None:
            evidence = NOTHING
        elif not isinstance(evidence, Evidence):
            evidence = Evidence.from_json(evidence)
        return cls(
            column=column,
            recoding=recoding,
            outputs=tuple(output_names(column, recoding, taken)),
            range=(float(training_range[0]), float(training_range[1])),
            deciles=None if deciles is None else tuple(float(v) for v in deciles),
            note=note,
            decided_by=decided_by,
            evidence=evidence,
        )


@dataclass(frozen=True)
class SetAside:
    """A column the analyst chose not to use (replay ignores it)."""

    column: str
    """Source column."""
    note: str = ""
    """Why."""
    decided_at: str = field(default_factory=now_iso)
    """When."""
    decided_by: str | None = None
    """Who (None in logs that did not record it)."""


@dataclass(frozen=True)
class EngineInfo:
    """Training data that lived in an engine (DuckDB, PostgreSQL, Spark): where, without
    any secret, and the engine's fingerprint of the rows (FORMAT.md, ``source.engine``)."""

    engine: str
    """``duckdb``, ``postgresql`` or ``spark``."""
    rows: int
    """Rows of the table or query with an outcome."""
    fingerprint: str
    """SHA-256 hex of counts and sums the engine computed (FORMAT.md says which)."""
    host: str | None = None
    """Host and port, or Spark master; None for a local file."""
    database: str | None = None
    """Database name, or the DuckDB file's name."""
    table: str | None = None
    """The table (or file read in place)."""
    query_sha256: str | None = None
    """SHA-256 hex of the query text, when the rows came from a query."""


@dataclass(frozen=True)
class SourceInfo:
    """The training data the decisions were made on."""

    name: str
    """File name (no folders), or a source's table name or ``query``."""
    rows: int
    """Rows in the file (or the table or query)."""
    sha256: str
    """SHA-256 of the file's bytes; for a source, its engine fingerprint."""
    engine: EngineInfo | None = None
    """Set when the data lived in an engine."""


@dataclass(frozen=True)
class RecodingLog:
    """Every decision for one outcome and one training file."""

    outcome_column: str
    """Outcome column."""
    event: Any
    """Outcome value counted as the event (JSON scalar)."""
    source: SourceInfo
    """Training data fingerprint."""
    decisions: tuple[Decision, ...] = ()
    """Accepted recodings, in decision order."""
    set_aside: tuple[SetAside, ...] = ()
    """Columns set aside."""
    written_by: str = f"bendwise {__version__}"
    """Program and version that wrote the file."""

    def decision_for(self, column: str) -> Decision | None:
        """The decision recorded for ``column``, if any."""
        return next((d for d in self.decisions if d.column == column), None)

    def is_set_aside(self, column: str) -> bool:
        """Whether ``column`` was set aside."""
        return any(s.column == column for s in self.set_aside)

    def with_decision(self, decision: Decision) -> RecodingLog:
        """A log where ``decision`` replaces any earlier decision or set-aside of its column."""
        rest = self.without(decision.column)
        return replace(rest, decisions=rest.decisions + (decision,))

    def with_set_aside(self, entry: SetAside) -> RecodingLog:
        """A log where the column is set aside (any recoding of it removed)."""
        rest = self.without(entry.column)
        return replace(rest, set_aside=rest.set_aside + (entry,))

    def without(self, column: str) -> RecodingLog:
        """A log with nothing recorded for ``column``."""
        return replace(
            self,
            decisions=tuple(d for d in self.decisions if d.column != column),
            set_aside=tuple(s for s in self.set_aside if s.column != column),
        )

    def output_names(self) -> set[str]:
        """Every derived column name in the log."""
        return {name for d in self.decisions for name in d.outputs}


def output_names(
    column: str, recoding: Recoding, taken: set[str] | frozenset[str] = frozenset()
) -> list[str]:
    """``<column>__<suffix>`` for each output; a clash with ``taken`` adds ``_2``, ``_3``..."""
    names = recoding.outputs(column)
    out = []
    for name in names:
        candidate, i = name, 2
        while candidate in taken or candidate in out:
            candidate, i = f"{name}_{i}", i + 1
        out.append(candidate)
    return out

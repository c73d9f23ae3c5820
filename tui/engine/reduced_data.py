"""A source reduced once, for every command that takes DATA: the counts of each numeric
column (``tui.engine.pushed``), the outcome's counts, a listing of the other columns, and
where the rows live, with their fingerprint, for the log.

It offers what the file path offers per column, computed from counts: profiles, quantile
deciles, the missing rows as a group, the training median, fill comparisons. Exact where
the reduction is exact; a binned column's quantiles come from the engine's quantile grid
(deciles and the median lie on it, so they are the engine's own quantiles).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

from tui.engine.counts import ReducedCounts
from tui.engine.drift import DECILE_PROBS
from tui.engine.forms.base import Recoding
from tui.engine.groups import empirical_logit
from tui.engine.missing_group import FillComparison, MissingGroup, compare_counts
from tui.engine.pushed import as_reduced, bin_plan, listed
from tui.engine.scan import ColumnScan, ReducedColumn, ScanSettings, scan_reduced
from tui.intake.profile import ColumnProfile
from tui.intake.sources import OtherColumn, Source, SourceOrigin, SourceOutcome
from tui.problems import InputProblem


@dataclass(frozen=True)
class ReducedData:
    """A source after its reduction: nothing row-level held."""

    label: str
    """Where the rows live, without any secret (for messages and reports)."""
    origin: SourceOrigin
    """The same, as fields for the log."""
    outcome: SourceOutcome
    """The outcome as the engine counted it."""
    reduced: dict[str, ReducedColumn]
    """Each numeric column's counts, as a file scan reduces it."""
    other: dict[str, OtherColumn]
    """Columns that are not numeric: listed, not scanned."""
    column_names: tuple[str, ...]
    """Every column of the relation, in the engine's order."""
    fingerprint: str
    """SHA-256 of engine-computed counts and sums (``lookups.fingerprint``)."""
    excluded: tuple[str, ...] = ()
    """Columns left out on request."""
    profiles: dict[str, ColumnProfile] = field(default_factory=dict)

    @property
    def columns(self) -> list[str]:
        """Numeric columns, in the engine's order."""
        return list(self.reduced)

    @property
    def rows(self) -> int:
        """Rows with an outcome."""
        return self.outcome.rows

    @property
    def name(self) -> str:
        """A short name: the table, or ``query``."""
        return self.origin.table or "query"

    @property
    def skipped(self) -> tuple[OtherColumn, ...]:
        """Columns that are not numeric (each with its ``name``)."""
        return tuple(self.other.values())

    def source_info(self) -> SourceRecord:
        """What the log records of this source."""
        return source_record(self.origin, self.outcome, self.fingerprint)

    def counts(self, column: str) -> ReducedCounts:
        """The column's counts per distinct value or per bin."""
        return self.reduced[column].counts

    def scans(
        self, settings: ScanSettings = ScanSettings(), listed_too: bool = True
    ) -> list[ColumnScan]:
        """Every numeric column's scan (q-values left for ``rank``), then the other
        columns listed (unless ``listed_too`` is False)."""
        found = [scan_reduced(n, r, settings)[0] for n, r in self.reduced.items()]
        return found + ([listed(c) for c in self.other.values()] if listed_too else [])

    def profile(self, column: str) -> ColumnProfile:
        """Counts and range of the column, as a file profile gives them."""
        r = self.reduced[column]
        c = r.counts
        n = int(round(c.rows))
        return ColumnProfile(
            column, True, "engine", r.rows, n, r.rows - n, r.nonfinite, c.distinct_values,
            c.minimum, c.maximum, r.integer_valued,
        )  # fmt: skip

    def deciles(self, column: str) -> tuple[float, ...] | None:
        """The nine training deciles (numpy's default quantile); None without values."""
        c = self.counts(column)
        if c.distinct == 0:
            return None
        return tuple(float(v) for v in c.quantile(list(DECILE_PROBS)))

    def median(self, column: str) -> float:
        """The median of the finite values: the fill bendwise proposes."""
        c = self.counts(column)
        if c.distinct == 0:
            raise ValueError("the column has no finite values, so it has no median")
        return float(c.quantile(0.5)[0])

    def missing_group(self, column: str) -> MissingGroup | None:
        """Rows with an outcome and a missing (or non-finite) x, as one group."""
        c = self.counts(column)
        seen, seen_events = float(c.rows), float(c.total_events)
        n = float(self.outcome.rows) - seen
        if n <= 0:
            return None
        events = float(self.outcome.events) - seen_events
        logit, variance = empirical_logit(events, n)
        return MissingGroup(n, events, seen, seen_events, logit, variance)

    def fill_comparison(
        self, column: str, recoding: Recoding, fill: float
    ) -> FillComparison | None:
        """``compare_fills`` from the counts and the missing group (exact: the fill puts
        every missing row at one value)."""
        group = self.missing_group(column)
        return None if group is None else compare_counts(recoding, self.counts(column), group, fill)


@dataclass(frozen=True)
class SourceRecord:
    """What the log records of a source: ``source`` (name, rows, sha256) and the fields
    of ``source.engine``."""

    name: str
    """The table, or ``query``."""
    rows: int
    """Every row of the relation, as a file's count does (with an outcome or not)."""
    fingerprint: str
    """The engine's fingerprint (also the log's ``source.sha256``)."""
    where: dict[str, object]
    """``source.engine``: engine, host, database, table, query_sha256, rows, fingerprint
    (absent fields left out)."""


def source_record(origin: SourceOrigin, outcome: SourceOutcome, fingerprint: str) -> SourceRecord:
    """The log's record of a source whose outcome the engine counted."""
    o = origin
    where = {
        "engine": o.engine, "host": o.host, "database": o.database, "table": o.table,
        "query_sha256": o.query_sha256, "rows": outcome.rows, "fingerprint": fingerprint,
    }  # fmt: skip
    total = outcome.rows + outcome.dropped_missing
    kept = {k: v for k, v in where.items() if v is not None}
    return SourceRecord(o.table or "query", total, fingerprint, kept)


def record_of(source: Source, outcome: str, event: str | None) -> SourceRecord:
    """The log's record of ``source`` (the outcome coded and the fingerprint computed in
    the engine), for data fetched from it rather than reduced."""
    coded = source.code_outcome(outcome, event)
    every = [c.name for c in source.columns() if c.name != outcome]
    return source_record(source.origin, coded, source.fingerprint(every)[1])


def text_listing(
    source: Source, outcome: str, event: str | None, fetched: Sequence[str]
) -> list[ColumnScan]:
    """The source's non-numeric columns not in ``fetched``, listed from engine counts
    (as a file scan lists its text columns) without fetching them."""
    coded = source.code_outcome(outcome, event)
    names = [
        c.name for c in source.columns() if not c.numeric and c.name not in (outcome, *fetched)
    ]
    _, other = source.reduce(coded, names, bin_plan()) if names else ([], [])
    return [listed(c) for c in other]


def reduce_data(
    source: Source,
    outcome: str,
    event: str | None,
    exclude: Sequence[str] = (),
    settings: ScanSettings = ScanSettings(),
    names: Sequence[str] | None = None,
) -> ReducedData:
    """Code the outcome and reduce the named columns (default: all but the outcome and
    ``exclude``) inside the engine. Closes nothing: the caller owns ``source``."""
    coded = source.code_outcome(outcome, event)
    every = [c.name for c in source.columns()]
    unknown = [e for e in exclude if e not in every]
    if unknown:
        raise InputProblem(f"--exclude names unknown columns: {', '.join(unknown)}")
    lacking = [n for n in names or () if n not in every]
    if lacking:
        raise InputProblem(f"{source.label} has no column(s) {', '.join(map(repr, lacking))}")
    chosen = (
        [n for n in every if n != outcome and n not in exclude] if names is None else list(names)
    )
    pushed, other = source.reduce(coded, chosen, bin_plan(settings))
    _, digest = source.fingerprint([n for n in every if n != outcome])
    return ReducedData(
        source.label,
        source.origin,
        coded,
        {p.name: as_reduced(p) for p in pushed},
        {o.name: o for o in other},
        tuple(every),
        digest,
        tuple(exclude),
    )

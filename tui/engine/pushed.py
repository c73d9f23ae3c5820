"""Scan a source whose counts were reduced inside its engine (``tui.intake.sources``).

The engine hands back per-value or per-bin rows and events cut exactly as
``counts.reduce_column`` cuts a file, so the same scoring code (``scan.scan_reduced``)
gives the same figures: equal where the reduction is exact, and for a binned column equal
up to the order of floating-point sums (engines with approximate quantiles: see their
module).
"""

from __future__ import annotations

from collections.abc import Iterator

from tui.engine import counts as C
from tui.engine.fitting import one_blas_thread
from tui.engine.flags import NOT_NUMERIC
from tui.engine.scan import ColumnScan, ReducedColumn, ScanSettings, scan_reduced
from tui.intake.sources.base import BinPlan, OtherColumn, PushedColumn, Source, SourceOutcome


def bin_plan(settings: ScanSettings = ScanSettings()) -> BinPlan:
    """The file scan's binning rule, for an engine to follow."""
    return BinPlan(settings.max_levels, C.EXACT_BELOW_ROWS, C.TAIL_ROWS, C._QUANTILE_GRID)


def as_reduced(column: PushedColumn) -> ReducedColumn:
    """Engine counts as the counts a file scan would have built."""
    counts = C.ReducedCounts(
        column.x,
        column.trials,
        column.events,
        column.exact,
        grid=column.grid,
        values=None if column.exact else column.distinct,
        low=None if column.exact else column.low,
        high=None if column.exact else column.high,
        gap=None if column.exact else column.gap,
    )
    return ReducedColumn(counts, column.rows, column.nonfinite, column.integer_valued)


def listed(column: OtherColumn) -> ColumnScan:
    """A non-numeric column, listed with its counts as a file scan lists it."""
    return ColumnScan(
        column=column.name,
        rows=column.rows,
        n=column.present,
        missing=column.rows - column.present,
        events=column.events,
        distinct=column.distinct,
        flags=(NOT_NUMERIC,),
    )


def scan_source(
    source: Source,
    outcome: SourceOutcome,
    names: list[str],
    settings: ScanSettings = ScanSettings(),
) -> Iterator[ColumnScan]:
    """Every named column's result (q-values left for ``rank``): numeric columns scored
    from the engine's counts, the rest listed."""
    pushed, other = source.reduce(outcome, names, bin_plan(settings))
    with one_blas_thread():
        for column in pushed:
            yield scan_reduced(column.name, as_reduced(column), settings)[0]
    for column in other:
        yield listed(column)

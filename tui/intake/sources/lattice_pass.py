"""DuckDB's reduction of long binned columns on a lattice: one GROUP BY a column.

For each binned column (its range from the profile), one statement counts rows, events
and summed x, and takes the smallest and largest value, in each of ``CELLS`` equal cells
of the range: a hash aggregate with no sort and at most a quarter of a million answer rows.
A cell whose smallest and largest value agree holds one value, so the cells at the ends of
the range and the crowded ones (``lattice_bins.to_read``) are nearly always known from that
answer; any that are not are read value by value in a second, filtered statement. The bins,
their counts and the quantile grid then come from ``lattice_bins``, as in the file scan's
lattice (``tui.engine.lattice``): bin counts exact, quantiles within one cell. The distinct
count is the profile's estimate (DuckDB's approx_count_distinct), and the smallest gap (it
only places the shift before a log) the smallest step among the values read, as the sketch
pass takes it among the lowest rows: unlike the file scan's lattice, columns reaching zero
or below are taken too.

A column whose lattice is too coarse (very long tails) or whose read cells hold too many
values is left to the sketch pass (``sketch_pass.py``).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

import numpy as np

from tui import lattice_bins as LB
from tui.intake.sources.base import BinPlan
from tui.intake.sources.dialect import Dialect

Arrays = Callable[[str], list[np.ndarray]]
"""Runs one statement and returns its answer's columns as arrays."""
Run = Callable[[str], list[tuple[Any, ...]]]
READ_AT_MOST = 64
"""Cells read value by value in the second statement at most; more: the sketch pass."""


def cell_of(column: str, low: float, per_unit: float, d: Dialect) -> str:
    """The cell number of a (finite, non-NULL) value: floor((x - low) * per_unit)."""
    scaled = f"FLOOR(({column} - {d.number(low)}) * {d.number(per_unit)})"
    return f"LEAST(CAST({scaled} AS BIGINT), {LB.CELLS - 1})"


def reduce_binned(
    run: Run,
    arrays: Arrays,
    base: str,
    binned: Sequence[int],
    stats: Sequence[Sequence[Any]],
    plan: BinPlan,
    d: Dialect,
) -> dict[int, tuple]:
    """(x, trials, events, gap, grid) of every binned column the lattice takes."""
    out: dict[int, tuple] = {}
    for i in binned:
        _, _, low, high, *_ = stats[i]
        got = _one(run, arrays, base, f"c{i}__", float(low), float(high), plan, d)
        if got is not None:
            out[i] = (got.x, got.trials, got.events, got.gap, got.grid)
    return out


def _one(
    run: Run,
    arrays: Arrays,
    base: str,
    c: str,
    low: float,
    high: float,
    plan: BinPlan,
    d: Dialect,
) -> LB.LatticeBins | None:
    per_unit = LB.scale(low, high)
    if per_unit is None:
        return None
    cell = cell_of(c, low, per_unit, d)
    k, rows, events, sums, least, most = arrays(
        f"{base}SELECT k__, COUNT(*) AS n__, SUM(y__) AS e__, SUM({c}) AS s__, "
        f"MIN({c}) AS lo__, MAX({c}) AS hi__ FROM (SELECT {cell} AS k__, y__, {c} FROM b "
        f"WHERE {c} IS NOT NULL) AS q GROUP BY k__"
    )
    order = np.argsort(k)
    least, most = np.asarray(least, float)[order], np.asarray(most, float)[order]
    cells = LB.occupied(
        np.asarray(k)[order],
        np.asarray(rows, float)[order],
        np.asarray(events, float)[order],
        np.asarray(sums, float)[order],
        low,
        high,
        np.where(least == most, least, np.nan),
    )
    if cells is None or cells.size <= plan.max_levels:
        return None
    which = LB.to_read(cells, plan.tail_rows)
    known, unread = LB.known_entries(cells, which)
    if unread.size > READ_AT_MOST:
        return None
    parts = [known]
    if unread.size:
        listed = ", ".join(str(int(v)) for v in cells.at[unread])
        answer = run(
            f"{base}SELECT {c}, COUNT(*), SUM(y__) FROM b WHERE {c} IS NOT NULL "
            f"AND {cell} IN ({listed}) GROUP BY {c}"
        )
        parts.append(tuple(np.array([row[j] for row in answer], float) for j in range(3)))
    xv, tv, ev = (np.concatenate(p) for p in zip(*parts, strict=True))
    at = np.argsort(xv, kind="stable")
    return LB.bins(cells, which, (xv[at], tv[at], ev[at]), plan.max_levels, plan.grid)

"""Counts of a long column without sorting it: a fine lattice of equal cells over its range.

Sorting a million doubles costs tens of milliseconds, more than every fit of the column's
first pass together. A lattice of ``CELLS`` equal cells between the smallest and largest
value needs only bincounts: rows, events and the sum of x in each cell. Cells are so narrow
(a 262,144th of the range) that the binned reduction can be built from them
(``tui.lattice_bins``, which DuckDB's pushed-down reduction shares):

- bins are unions of whole cells, so no run of tied values is ever split and each bin's rows,
  events and mean x are exact; the cuts follow the sorted path's rule (half at equal counts,
  half at equal steps across the range), placed at cell edges instead of between rows;
- every distinct value in the cells that hold the ``tail_rows`` lowest and highest rows,
  and in crowded cells (more than a quantile step of rows: a heap of ties, perhaps with a
  few other values beside it), is an entry of its own with its exact rows and events,
  read off the rows of those cells only;
- quantiles are exact where the row lies in such an entry, and interpolated across its
  cell otherwise: off by less than one cell's width;
- the distinct count is exact when every cell holds one value (whole numbers with cells no
  wider than one) and otherwise estimated by linear counting (Whang, Vander-Zanden & Taylor
  1990, ACM TODS 15(2)) over a 64-bit hash of every value: standard error about 0.1% at a
  million distinct values;
- only columns above zero are taken: a log or power of a column reaching zero or below
  is shifted by its exact smallest gap between values, which only the sort gives (the gap
  kept here is the smallest step among the values read, which no shift uses).

Where the lattice is too coarse (a cell wider than 1/``lattice_bins.SPREAD_CELLS`` of the distance
between the 5th and 95th percentiles, as in very long tails, or crowded cells holding more
values than there are bins), or the column has so few occupied cells that it may need exact
counts per value, ``lattice_counts`` returns None and the caller sorts.
benchmarks/results/lattice_accuracy.md measures the approximation.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tui import lattice_bins as LB
from tui.engine.heap import reuse_freed_memory
from tui.lattice_bins import CELLS

__all__ = ["CELLS", "LATTICE_ROWS", "LatticeCounts", "lattice_counts"]

LATTICE_ROWS = 200_000
"""From this many rows the lattice replaces the sort (below it, sorting costs a few ms)."""


@dataclass(frozen=True)
class LatticeCounts:
    """A binned column and its distinct count."""

    bins: LB.LatticeBins
    values: int
    values_estimated: bool


def lattice_counts(
    x: np.ndarray,
    event: np.ndarray,
    max_levels: int,
    tail_rows: int,
    grid_size: int,
    whole: bool = False,
) -> LatticeCounts | None:
    """Binned counts of finite ``x`` with a 0/1 ``event`` (bool), or None where the
    caller must sort (also for any column reaching zero or below). ``whole``: every value
    is a whole number (cells no wider than one then hold one value each, and the distinct
    count is exact)."""
    low, high = float(x.min()), float(x.max())
    per_unit = LB.scale(low, high)
    if low <= 0 or per_unit is None:
        return None
    reuse_freed_memory()  # the lattice's arrays of a quarter of a million cells, per column
    cell = _cell_numbers(x, low, per_unit)
    per_cell = np.bincount(cell, minlength=CELLS)
    at = np.flatnonzero(per_cell)
    if at.size <= max_levels:
        return None  # perhaps few enough values to keep each one: the sorted path decides
    rows = per_cell[at]
    sums = np.bincount(cell, weights=x, minlength=CELLS)[at]
    one_each = whole and (high - low) / CELLS <= 1.0
    cells = LB.occupied(
        at,
        rows,
        np.bincount(cell, weights=event.astype(float), minlength=CELLS)[at],
        sums,
        low,
        high,
        sums / rows if one_each else None,  # sums of whole numbers are exact
    )
    if cells is None:
        return None
    which = LB.to_read(cells, tail_rows)
    known, unread = LB.known_entries(cells, which)
    entries = _read(x, cell, event, cells, unread, known)
    bins = LB.bins(cells, which, entries, max_levels, grid_size)
    if bins is None:
        return None
    values = cells.size if one_each else _distinct_estimate(x, cells.size)
    return LatticeCounts(bins, int(values), not one_each)


def _cell_numbers(x: np.ndarray, low: float, scale: float) -> np.ndarray:
    """floor((x - low) * scale) for every value, the largest value in the last cell."""
    scaled = np.subtract(x, low)
    scaled *= scale
    cell = scaled.astype(np.intp)
    np.minimum(cell, CELLS - 1, out=cell)
    return cell


def _read(
    x: np.ndarray,
    cell: np.ndarray,
    event: np.ndarray,
    cells: LB.Cells,
    unread: np.ndarray,
    known: tuple[np.ndarray, np.ndarray, np.ndarray],
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Every distinct value of the cells at positions ``unread`` with its rows and events,
    joined to the ``known`` ones, ascending."""
    parts = [known]
    if unread.size:
        flag = np.zeros(CELLS, dtype=bool)
        flag[cells.at[unread]] = True
        inside = flag[cell]
        xs = x[inside]
        # Two plain uniques: an inverse index would cost a stable argsort, ten times more.
        values, trials = np.unique(xs, return_counts=True)
        with_event, times = np.unique(xs[event[inside]], return_counts=True)
        events = np.zeros(values.size)
        events[np.searchsorted(values, with_event)] = times
        parts.append((values, trials.astype(float), events))
    xv, tv, ev = (np.concatenate(p) for p in zip(*parts, strict=True))
    order = np.argsort(xv, kind="stable")
    return xv[order], tv[order], ev[order]


def _distinct_estimate(x: np.ndarray, at_least: int) -> int:
    """Distinct values by linear counting over a 64-bit hash of each value
    (``lattice_bins.linear_count``); at least ``at_least`` (the occupied cells)."""
    power = LB.hash_power(x.size)
    slots = np.bincount(LB.hash_slots(x, power), minlength=1 << power)
    return LB.linear_count((1 << power) - np.count_nonzero(slots), power, x.size, at_least)

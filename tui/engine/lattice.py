"""Counts of a long column without sorting it: a fine lattice of equal cells over its range.

Sorting a million doubles costs tens of milliseconds, more than every fit of the column's
first pass together. A lattice of ``CELLS`` equal cells between the smallest and largest
value needs only bincounts: rows, events and the sum of x in each cell. Cells are so narrow
(a millionth of the range) that the binned reduction can be built from them:

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
  1990, ACM TODS 15(2)) over a 64-bit hash of every value: standard error about 0.1% at a million
  distinct values;
- only columns above zero are taken: a log or power of a column reaching zero or below
  is shifted by its exact smallest gap between values, which only the sort gives (the gap
  kept here is the smallest step among the lowest and highest values, which no shift uses).

Where the lattice is too coarse (a cell wider than 1/``SPREAD_CELLS`` of the distance
between the 5th and 95th percentiles, as in very long tails, or crowded cells holding more
values than there are bins), or the column has so few occupied cells that it may need exact
counts per value, ``lattice_counts`` returns None and the caller sorts.
benchmarks/results/lattice_accuracy.md measures the approximation.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tui.engine.heap import reuse_freed_memory

CELLS = 1 << 18
"""Cells of the lattice: a 262,144th of the range each."""
LATTICE_ROWS = 200_000
"""From this many rows the lattice replaces the sort (below it, sorting costs a few ms)."""
GRID_STEPS = 2000
"""A cell holding more than rows / GRID_STEPS rows (a quantile step) is read value by value."""
SPREAD_CELLS = 4000
"""A cell must be no wider than this share of the distance between the 5th and 95th
percentiles; else (very heavy tails) the caller sorts."""
_HASH_SLOTS_MAX = 1 << 23


@dataclass(frozen=True)
class LatticeBins:
    """What ``counts.ReducedCounts`` holds of a binned column (see its fields)."""

    x: np.ndarray
    trials: np.ndarray
    events: np.ndarray
    grid: np.ndarray
    values: int
    values_estimated: bool
    low: float
    high: float
    gap: float | None


@dataclass(frozen=True)
class _Cells:
    """The occupied cells, ascending: cell numbers, rows, events, sum of x, and the rows
    up to and including each cell."""

    at: np.ndarray
    rows: np.ndarray
    events: np.ndarray
    sums: np.ndarray
    low: float
    width: float
    cum: np.ndarray

    @property
    def size(self) -> int:
        return int(self.at.size)


def lattice_counts(
    x: np.ndarray,
    event: np.ndarray,
    max_levels: int,
    tail_rows: int,
    grid_size: int,
    whole: bool = False,
) -> LatticeBins | None:
    """Binned counts of finite ``x`` with a 0/1 ``event`` (bool), or None where the
    caller must sort (also for any column reaching zero or below). ``whole``: every value
    is a whole number (cells no wider than one then hold one value each, and the distinct
    count is exact)."""
    n = x.size
    low, high = float(x.min()), float(x.max())
    span = high - low
    if low <= 0 or not (np.isfinite(span) and span > 0 and np.isfinite(CELLS / span)):
        return None
    reuse_freed_memory()  # the lattice's arrays of a million cells, again for every column
    cell = _cell_numbers(x, low, CELLS / span)
    per_cell = np.bincount(cell, minlength=CELLS)
    at = np.flatnonzero(per_cell)
    if at.size <= max_levels:
        return None  # perhaps few enough values to keep each one: the sorted path decides
    rows = per_cell[at].astype(float)
    cum = np.cumsum(rows)
    width = span / CELLS
    spread = np.diff(at[np.searchsorted(cum, [0.05 * n, 0.95 * n])])[0] * width
    if width * SPREAD_CELLS > spread:
        return None  # too coarse for the middle of the column: the tails are too long
    cells = _Cells(
        at,
        rows,
        np.bincount(cell, weights=event.astype(float), minlength=CELLS)[at],
        np.bincount(cell, weights=x, minlength=CELLS)[at],
        low,
        width,
        cum,
    )
    one_each = whole and cells.width <= 1.0
    value_of = cells.sums / cells.rows if one_each else np.full(cells.size, np.nan)
    # Cells read value by value: those holding the lowest and highest rows, and crowded
    # ones (a heap of ties, with perhaps a few other values beside it).
    exact = np.unique(np.r_[_end_cells(cells, tail_rows), np.flatnonzero(rows > n / GRID_STEPS)])
    entries = _entries(x, cell, event, cells, exact, value_of)
    if entries[0].size > max_levels:
        return None  # crowded cells of many values: the lattice is too coarse here
    cut = _bin_starts(cells, max_levels, exact)
    trials = np.add.reduceat(cells.rows, cut)
    events = np.add.reduceat(cells.events, cut)
    means = np.clip(np.add.reduceat(cells.sums, cut) / trials, low, high)
    binned = ~np.isin(cut, exact)  # a cell read value by value is not a bin
    out_x = np.r_[entries[0], means[binned]]
    order = np.argsort(out_x, kind="stable")
    out_x = out_x[order]
    out_t = np.r_[entries[1], trials[binned]][order]
    out_e = np.r_[entries[2], events[binned]][order]
    is_value = np.r_[np.ones(entries[0].size, bool), np.zeros(int(binned.sum()), bool)][order]
    grid = _grid(cells, value_of, out_x, out_t, is_value, n, grid_size)
    grid[0], grid[-1] = low, high
    values = cells.size if one_each else _distinct_estimate(x, cells.size)
    steps = np.diff(entries[0])
    return LatticeBins(
        out_x,
        out_t,
        out_e,
        grid,
        int(values),
        not one_each,
        low,
        high,
        float(steps.min()) if steps.size and steps.min() > 0 else None,
    )


def _cell_numbers(x: np.ndarray, low: float, scale: float) -> np.ndarray:
    """floor((x - low) * scale) for every value, the largest value in the last cell."""
    scaled = np.subtract(x, low)
    scaled *= scale
    cell = scaled.astype(np.intp)
    np.minimum(cell, CELLS - 1, out=cell)
    return cell


def _end_cells(cells: _Cells, tail_rows: int) -> np.ndarray:
    """Positions (among the occupied cells) of the cells holding the ``tail_rows`` + 1
    lowest and the ``tail_rows`` highest rows (the sorted path's rule)."""
    head = int(np.searchsorted(cells.cum, tail_rows, side="right")) + 1
    first = int(np.searchsorted(cells.cum, cells.cum[-1] - tail_rows, side="right"))
    return np.r_[np.arange(min(head, cells.size)), np.arange(first, cells.size)]


def _entries(
    x: np.ndarray,
    cell: np.ndarray,
    event: np.ndarray,
    cells: _Cells,
    which: np.ndarray,
    value_of: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Every distinct value in the cells at positions ``which``, with its rows and events,
    ascending; a cell found to hold one value is not read again."""
    known = ~np.isnan(value_of[which])
    parts = [(value_of[which[known]], cells.rows[which[known]], cells.events[which[known]])]
    unread = which[~known]
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


def _bin_starts(cells: _Cells, max_levels: int, exact: np.ndarray) -> np.ndarray:
    """Position (among the occupied cells) where each bin begins: half the cuts at equal
    counts, half at equal steps across the range, every cell in ``exact`` a bin alone."""
    m = cells.size
    before = cells.cum - cells.rows  # rows below each cell
    targets = np.linspace(0.0, cells.cum[-1], max(1, max_levels // 2) + 1)
    by_count = np.searchsorted(before, targets[1:-1], side="left")
    steps = max_levels - max_levels // 2
    edges = (np.arange(1, steps) * (CELLS / steps)).astype(np.intp)
    by_width = np.searchsorted(cells.at, edges, side="left")
    cut = np.unique(np.r_[0, by_count, by_width, exact, exact + 1])
    return cut[cut < m]


def _grid(
    cells: _Cells,
    value_of: np.ndarray,
    out_x: np.ndarray,
    out_t: np.ndarray,
    is_value: np.ndarray,
    n: int,
    size: int,
) -> np.ndarray:
    """numpy's default (type 7) quantiles at ``size`` equally spaced probabilities."""
    h = (n - 1) * np.linspace(0.0, 1.0, size)
    below = np.floor(h)
    frac = h - below
    v_lo = _sorted_row(below, cells, value_of, out_x, out_t, is_value)
    v_hi = _sorted_row(np.minimum(below + 1, n - 1), cells, value_of, out_x, out_t, is_value)
    return v_lo + frac * (v_hi - v_lo)


def _sorted_row(
    pos: np.ndarray,
    cells: _Cells,
    value_of: np.ndarray,
    out_x: np.ndarray,
    out_t: np.ndarray,
    is_value: np.ndarray,
) -> np.ndarray:
    """The value of the sorted row at each 0-based position: exact where its row lies in
    a value read exactly or a one-valued cell, else spread evenly across the row's cell."""
    j = np.minimum(np.searchsorted(cells.cum, pos, side="right"), cells.size - 1)
    within = (pos - (cells.cum[j] - cells.rows[j]) + 0.5) / cells.rows[j]
    out = cells.low + (cells.at[j] + within) * cells.width
    known = ~np.isnan(value_of[j])
    out[known] = value_of[j][known]
    k = np.minimum(np.searchsorted(np.cumsum(out_t), pos, side="right"), out_x.size - 1)
    read = is_value[k]
    out[read] = out_x[k[read]]
    return out


def _distinct_estimate(x: np.ndarray, at_least: int) -> int:
    """Distinct values by linear counting over MurmurHash3's 64-bit finaliser (fmix64) of
    each value's bits; at least ``at_least`` (the occupied cells), at most the rows."""
    n = x.size
    power = min(int(np.log2(_HASH_SLOTS_MAX)), max(10, int(np.ceil(np.log2(max(n, 2))))))
    slots = 1 << power
    z = (x + 0.0).view(np.uint64)  # + 0.0: -0.0 and 0.0 are one value (and a copy)
    z ^= z >> np.uint64(33)
    z *= np.uint64(0xFF51AFD7ED558CCD)
    z ^= z >> np.uint64(33)
    z *= np.uint64(0xC4CEB9FE1A85EC53)
    z >>= np.uint64(64 - power)  # fmix64's last xor-shift leaves these top bits as they are
    empty = slots - np.count_nonzero(np.bincount(z.view(np.intp), minlength=slots))
    if empty == 0:
        return n
    estimate = -slots * np.log(empty / slots)
    return int(min(n, max(at_least, round(estimate))))

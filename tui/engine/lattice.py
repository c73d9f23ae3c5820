"""Counts of a long column without sorting it: a fine lattice of equal cells over its range.

Sorting a million doubles costs tens of milliseconds, more than every fit of the column's
first pass together. A lattice of ``CELLS`` equal cells between the smallest and largest
value needs only bincounts: rows, events and the sum of x in each cell. Cells are so narrow
(a millionth of the range) that the binned reduction can be built from them:

- bins are unions of whole cells, so no run of tied values is ever split and each bin's rows,
  events and mean x are exact; the cuts follow the sorted path's rule (half at equal counts,
  half at equal steps across the range), placed at cell edges instead of between rows;
- every distinct value in the cells that hold the ``tail_rows`` lowest and highest rows is
  a bin of its own, with its exact value (read off the few rows of those cells);
- quantiles are exact in the tails and where a cell holds one value, and interpolated
  across the cell otherwise: off by less than one cell's width;
- the distinct count is exact when every cell holds one value (whole numbers with cells no
  wider than one) and otherwise estimated by linear counting (Whang, Vander-Zanden & Taylor
  1990, ACM TODS 15(2)) over a 64-bit hash of every value: standard error about 0.1% at a million
  distinct values;
- the smallest gap is measured among the lowest and highest values (where a shifted log or
  power is steepest), not over the whole column.

Where the lattice is too coarse (a cell holding more than a quantile step of rows and more
than one value, as in very heavy tails), or the column has so few occupied cells that it
may need exact counts per value, ``lattice_counts`` returns None and the caller sorts.
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
"""A cell holding more than rows / GRID_STEPS rows (a quantile step) must hold one value;
else the caller sorts."""
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


@dataclass(frozen=True)
class _Ends:
    """Distinct values of the cells at one end of the range, with rows and events."""

    cells: int
    """How many occupied cells (from that end) the values came from."""
    x: np.ndarray
    rows: np.ndarray
    events: np.ndarray


def lattice_counts(
    x: np.ndarray,
    event: np.ndarray,
    max_levels: int,
    tail_rows: int,
    grid_size: int,
    whole: bool = False,
) -> LatticeBins | None:
    """Binned counts of finite ``x`` with a 0/1 ``event`` (bool), or None where the
    caller must sort. ``whole``: every value is a whole number (cells no wider than one
    then hold one value each, and the distinct count is exact)."""
    n = x.size
    low, high = float(x.min()), float(x.max())
    span = high - low
    if not (np.isfinite(span) and span > 0 and np.isfinite(CELLS / span)):
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
    # A crowded cell is fine when it holds one value (a heap of ties, such as zeros).
    crowded = np.flatnonzero(cells.rows > n / GRID_STEPS)
    value_of = np.full(cells.size, np.nan)  # a cell's one value, where known
    if one_each:
        value_of = cells.sums / cells.rows  # sums of whole numbers are exact
    elif crowded.size and not _one_value_each(x, cell, cells, crowded, value_of):
        return None

    head = _end(x, cell, event, cells, tail_rows, value_of, lowest=True)
    tail = _end(x, cell, event, cells, tail_rows, value_of, lowest=False)
    cut = _bin_starts(cells, max_levels, head.cells, tail.cells)
    trials = np.add.reduceat(cells.rows, cut)
    events = np.add.reduceat(cells.events, cut)
    means = np.clip(np.add.reduceat(cells.sums, cut) / trials, low, high)
    # Every end cell is a bin of its own: it goes out, its values come in.
    middle = (cut >= head.cells) & (cut < cells.size - tail.cells)
    grid = _grid(cells, value_of, head, tail, n, grid_size)
    grid[0], grid[-1] = low, high
    values = cells.size if one_each else _distinct_estimate(x, cells.size)
    return LatticeBins(
        np.r_[head.x, means[middle], tail.x],
        np.r_[head.rows, trials[middle], tail.rows],
        np.r_[head.events, events[middle], tail.events],
        grid,
        int(values),
        not one_each,
        low,
        high,
        _smallest_step(head.x, tail.x),
    )


def _cell_numbers(x: np.ndarray, low: float, scale: float) -> np.ndarray:
    """floor((x - low) * scale) for every value, the largest value in the last cell."""
    scaled = np.subtract(x, low)
    scaled *= scale
    cell = scaled.astype(np.intp)
    np.minimum(cell, CELLS - 1, out=cell)
    return cell


def _one_value_each(
    x: np.ndarray, cell: np.ndarray, cells: _Cells, which: np.ndarray, value_of: np.ndarray
) -> bool:
    """Whether each of the occupied cells ``which`` holds one value (then written into
    ``value_of``): every row of the cell equals one written row of it."""
    flag = np.zeros(CELLS, dtype=bool)
    flag[cells.at[which]] = True
    inside = flag[cell]
    xs, cs = x[inside], cell[inside]
    seen = np.empty(CELLS)
    seen[cs] = xs
    if not np.array_equal(xs, seen[cs]):
        return False
    value_of[which] = seen[cells.at[which]]
    return True


def _end(
    x: np.ndarray,
    cell: np.ndarray,
    event: np.ndarray,
    cells: _Cells,
    tail_rows: int,
    value_of: np.ndarray,
    lowest: bool,
) -> _Ends:
    """The distinct values of the occupied cells holding the ``tail_rows`` lowest (or
    highest) rows, and one row more at the low end (the sorted path's rule)."""
    cum = cells.cum
    if lowest:
        count = int(np.searchsorted(cum, tail_rows, side="right")) + 1
        picked = np.arange(min(count, cells.size))
    else:
        first = int(np.searchsorted(cum, cum[-1] - tail_rows, side="right"))
        picked = np.arange(first, cells.size)
    known = ~np.isnan(value_of[picked])
    parts = [(value_of[picked[known]], cells.rows[picked[known]], cells.events[picked[known]])]
    unread = cells.at[picked[~known]]
    if unread.size:
        # The cells are neighbours at one end of the range: two comparisons find their
        # rows, less those of a known one-valued cell among them.
        inside = (cell >= unread[0]) & (cell <= unread[-1])
        for c in cells.at[picked[known]]:
            if unread[0] < c < unread[-1]:
                inside &= cell != c
        xs = x[inside]
        values, where, trials = np.unique(xs, return_inverse=True, return_counts=True)
        events = np.bincount(where, weights=event[inside], minlength=values.size)
        parts.append((values, trials.astype(float), events))
    xv, tv, ev = (np.concatenate(p) for p in zip(*parts, strict=True))
    order = np.argsort(xv, kind="stable")
    return _Ends(int(picked.size), xv[order], tv[order], ev[order])


def _bin_starts(cells: _Cells, max_levels: int, head: int, tail: int) -> np.ndarray:
    """Position (among the occupied cells) where each bin begins: half the cuts at equal
    counts, half at equal steps across the range, every end cell a bin of its own."""
    m = cells.size
    before = cells.cum - cells.rows  # rows below each cell
    targets = np.linspace(0.0, cells.cum[-1], max(1, max_levels // 2) + 1)
    by_count = np.searchsorted(before, targets[1:-1], side="left")
    steps = max_levels - max_levels // 2
    edges = (np.arange(1, steps) * (CELLS / steps)).astype(np.intp)
    by_width = np.searchsorted(cells.at, edges, side="left")
    ends = np.r_[np.arange(head + 1), np.arange(m - tail, m)]
    cut = np.unique(np.r_[0, by_count, by_width, ends])
    return cut[cut < m]


def _grid(
    cells: _Cells, value_of: np.ndarray, head: _Ends, tail: _Ends, n: int, size: int
) -> np.ndarray:
    """numpy's default (type 7) quantiles at ``size`` equally spaced probabilities."""
    h = (n - 1) * np.linspace(0.0, 1.0, size)
    below = np.floor(h)
    frac = h - below
    v_lo = _sorted_row(below, cells, value_of, head, tail, n)
    v_hi = _sorted_row(np.minimum(below + 1, n - 1), cells, value_of, head, tail, n)
    return v_lo + frac * (v_hi - v_lo)


def _sorted_row(
    pos: np.ndarray, cells: _Cells, value_of: np.ndarray, head: _Ends, tail: _Ends, n: int
) -> np.ndarray:
    """The value of the sorted row at each 0-based position: exact in the ends and in
    one-valued cells, else spread evenly across the row's cell."""
    cum = cells.cum
    j = np.minimum(np.searchsorted(cum, pos, side="right"), cells.size - 1)
    within = (pos - (cum[j] - cells.rows[j]) + 0.5) / cells.rows[j]
    out = cells.low + (cells.at[j] + within) * cells.width
    known = ~np.isnan(value_of[j])
    out[known] = value_of[j][known]
    head_rows = head.rows.sum()
    low_end = pos < head_rows
    k = np.searchsorted(np.cumsum(head.rows), pos[low_end], side="right")
    out[low_end] = head.x[np.minimum(k, head.x.size - 1)]
    start = n - tail.rows.sum()
    high_end = pos >= start
    k = np.searchsorted(np.cumsum(tail.rows), pos[high_end] - start, side="right")
    out[high_end] = tail.x[np.minimum(k, tail.x.size - 1)]
    return out


def _smallest_step(*ends: np.ndarray) -> float | None:
    steps = [np.diff(v) for v in ends if v.size > 1]
    least = min((float(s.min()) for s in steps), default=None)
    return least if least is not None and least > 0 else None


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

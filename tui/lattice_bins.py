"""Bins from counts per cell of a fine lattice over a column's range.

A root module (numpy only), since two rooms share it: the file scan's reduction of long
columns (``tui.engine.lattice``) and an engine's pushed-down one (DuckDB,
``tui.intake.sources.lattice_pass``). Both count rows, events and summed x in ``CELLS`` equal
cells between the column's smallest and largest value, and read the few cells that need
it value by value. This module turns those counts into the binned reduction (see
``tui.engine.lattice`` for the rules and their error): bins of whole cells cut as the
sorted path cuts them, each value read exactly an entry of its own, and the quantile grid.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

CELLS = 1 << 18
"""Cells of the lattice: a 262,144th of the range each."""
GRID_STEPS = 2000
"""A cell holding more than rows / GRID_STEPS rows (a quantile step) is read value by value."""
HASH_SLOTS_MAX = 1 << 23
"""Slots of the linear-counting bitmap behind an estimated distinct count, at most."""
SPREAD_CELLS = 4000
"""A cell must be no wider than this share of the distance between the 5th and 95th
percentiles; else (very long tails) the lattice is too coarse and the column is sorted."""


@dataclass(frozen=True)
class LatticeBins:
    """A binned column: what ``ReducedCounts`` holds of it (see its fields)."""

    x: np.ndarray
    trials: np.ndarray
    events: np.ndarray
    grid: np.ndarray
    low: float
    high: float
    gap: float | None


@dataclass(frozen=True)
class Cells:
    """The occupied cells, ascending: cell numbers, rows, events, summed x, the rows up to
    and including each cell, and each cell's one value where it is known to hold one
    (NaN otherwise)."""

    at: np.ndarray
    rows: np.ndarray
    events: np.ndarray
    sums: np.ndarray
    low: float
    high: float
    cum: np.ndarray
    value_of: np.ndarray

    @property
    def size(self) -> int:
        return int(self.at.size)

    @property
    def width(self) -> float:
        return (self.high - self.low) / CELLS


def scale(low: float, high: float) -> float | None:
    """Cells per unit of x, or None where the range cannot be divided (one value, or a
    span a double cannot hold)."""
    span = high - low
    if not (np.isfinite(span) and span > 0 and np.isfinite(CELLS / span)):
        return None
    return CELLS / span


def occupied(
    at: np.ndarray,
    rows: np.ndarray,
    events: np.ndarray,
    sums: np.ndarray,
    low: float,
    high: float,
    value_of: np.ndarray | None = None,
) -> Cells | None:
    """The cells as ``Cells`` (ascending ``at``), or None when the lattice is too coarse
    for the middle of the column (very long tails)."""
    rows = np.asarray(rows, dtype=float)
    cum = np.cumsum(rows)
    n = cum[-1]
    width = (high - low) / CELLS
    spread = np.diff(at[np.searchsorted(cum, [0.05 * n, 0.95 * n])])[0] * width
    if width * SPREAD_CELLS > spread:
        return None
    known = np.full(at.size, np.nan) if value_of is None else np.asarray(value_of, float)
    return Cells(
        at, rows, np.asarray(events, float), np.asarray(sums, float), low, high, cum, known
    )


def to_read(cells: Cells, tail_rows: int) -> np.ndarray:
    """Positions (among the occupied cells) of the cells whose values are read one by
    one: those holding the ``tail_rows`` + 1 lowest and ``tail_rows`` highest rows (the
    sorted path's rule), and crowded ones (a heap of ties, perhaps with a few other values
    beside it)."""
    head = int(np.searchsorted(cells.cum, tail_rows, side="right")) + 1
    first = int(np.searchsorted(cells.cum, cells.cum[-1] - tail_rows, side="right"))
    crowded = np.flatnonzero(cells.rows > cells.cum[-1] / GRID_STEPS)
    ends = np.r_[np.arange(min(head, cells.size)), np.arange(first, cells.size)]
    return np.unique(np.r_[ends, crowded])


def known_entries(cells: Cells, which: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(values, rows, events) of the cells at positions ``which`` known to hold one
    value, and the positions among ``which`` still to be read."""
    known = ~np.isnan(cells.value_of[which])
    got = which[known]
    return (cells.value_of[got], cells.rows[got], cells.events[got]), which[~known]


def bins(
    cells: Cells,
    which: np.ndarray,
    entries: tuple[np.ndarray, np.ndarray, np.ndarray],
    max_levels: int,
    grid_size: int,
) -> LatticeBins | None:
    """The binned reduction: every value of the cells at ``which`` an entry of its own
    (``entries``: their values, rows and events, ascending), the other cells in bins;
    None when the read cells hold more values than there are bins (too coarse)."""
    xv, tv, ev = entries
    if xv.size > max_levels:
        return None
    cut = _bin_starts(cells, max_levels, which)
    trials = np.add.reduceat(cells.rows, cut)
    events = np.add.reduceat(cells.events, cut)
    means = np.clip(np.add.reduceat(cells.sums, cut) / trials, cells.low, cells.high)
    binned = ~np.isin(cut, which)  # a cell read value by value is not a bin
    out_x = np.r_[xv, means[binned]]
    order = np.argsort(out_x, kind="stable")
    out_x = out_x[order]
    out_t = np.r_[tv, trials[binned]][order]
    out_e = np.r_[ev, events[binned]][order]
    is_value = np.r_[np.ones(xv.size, bool), np.zeros(int(binned.sum()), bool)][order]
    n = int(round(cells.cum[-1]))
    grid = _grid(cells, cells.value_of, out_x, out_t, is_value, n, grid_size)
    grid[0], grid[-1] = cells.low, cells.high
    steps = np.diff(xv)
    gap = float(steps.min()) if steps.size and steps.min() > 0 else None
    return LatticeBins(out_x, out_t, out_e, grid, cells.low, cells.high, gap)


def _bin_starts(cells: Cells, max_levels: int, exact: np.ndarray) -> np.ndarray:
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
    cells: Cells,
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
    cells: Cells,
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


def hash_power(n: int) -> int:
    """log2 of the linear-counting slots for ``n`` values: about one slot a value."""
    return min(int(np.log2(HASH_SLOTS_MAX)), max(10, int(np.ceil(np.log2(max(n, 2))))))


def hash_slots(x: np.ndarray, power: int) -> np.ndarray:
    """The slot of each value: the top ``power`` bits of MurmurHash3's 64-bit finaliser
    (fmix64) of its bits."""
    z = (x + 0.0).view(np.uint64)  # + 0.0: -0.0 and 0.0 are one value (and a copy)
    z ^= z >> np.uint64(33)
    z *= np.uint64(0xFF51AFD7ED558CCD)
    z ^= z >> np.uint64(33)
    z *= np.uint64(0xC4CEB9FE1A85EC53)
    z >>= np.uint64(64 - power)  # fmix64's last xor-shift leaves these top bits as they are
    return z.view(np.intp)


def linear_count(empty: int, power: int, rows: int, at_least: int) -> int:
    """Distinct values by linear counting (Whang, Vander-Zanden & Taylor 1990, ACM TODS
    15(2)) from the ``empty`` slots of ``2**power``; at least ``at_least``, at most ``rows``."""
    slots = 1 << power
    if empty == 0:
        return rows
    estimate = -slots * np.log(empty / slots)
    return int(min(rows, max(at_least, round(estimate))))

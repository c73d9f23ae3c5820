"""DuckDB's approximate reduction of binned columns on large inputs: two scans for all of
them, instead of one sort and one join per column (``sorted_pass.py``, ``bin_join.py``).

1. Statements over every binned column (``COLUMNS_PER_QUERY`` a statement):
   ``approx_quantile`` (DuckDB's T-digest) at the quantile grid, and the exact
   ``TAIL_ROWS + 1`` lowest and ``TAIL_ROWS`` highest values (``min(x, k)`` /
   ``max(x, k)``). The grid stands for the quantile function: the equal-count cuts are
   read off it, so they sit where a file scan cuts up to the sketch's rank error; the
   tails, the equal-width cuts and the range are exact.
2. As many statements of ``histogram(x, boundaries)``, plain and with
   ``FILTER (WHERE y__ = 1)``: rows and events per bin, exact for those bins.

A bin's representative x (a file scan uses its mean) is the mean of the midpoints of its
``PIECES`` equal-width pieces weighted by their exact rows (the rows histogram has a
boundary at each piece's end); a tail bin holds one value, which is its x. The smallest
gap is the smallest step among the lowest rows (it only places the shift before a log,
``tui.engine.forms.shift``); the distinct count is the profile's approx_count_distinct.
Scores differ from the file scan's by the error measured in benchmarks/duckdb_speed.py
(``--error``) and tests/test_duckdb_sketch_pass.py; the tolerance promised is 2% relative
or 0.5 absolute per score with the same ranking. On 10,000,000 x 20 (invented), five
runs: largest error 22.2 on a score of 4,985 (0.45%), scores under 10 within 0.03, ranking
the same; the sketch varies a little run to run (DuckDB merges it across threads).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tui.intake.sources import bins
from tui.intake.sources.base import BinPlan
from tui.intake.sources.dialect import Dialect

COLUMNS_PER_QUERY = 4
"""Columns a statement: 16 binned columns' boundary lists in one statement took DuckDB's
process to 1,168 MiB (CSV, 10,000,000 rows); the scans themselves cost per column."""
PIECES = 8
"""Equal-width pieces per bin whose rows place the bin's x (its mean up to 1/16 of the
bin's width; midpoints of the sketched quantile function put one skewed column's score
at 3.9 where the file scan has 6.3)."""


@dataclass(frozen=True)
class Sketch:
    """What the first scan gives for one binned column."""

    grid: np.ndarray
    """Approximate quantiles at linspace(0, 1, plan.grid)."""
    lowest: np.ndarray
    """The ``tail_rows + 1`` smallest values, ascending (exact)."""
    highest: np.ndarray
    """The ``tail_rows`` largest values, ascending (exact)."""


def _listed(values: np.ndarray, d: Dialect) -> str:
    return "[" + ", ".join(d.number(float(v)) for v in values) + "]::DOUBLE[]"


def sketch_parts(column: str, plan: BinPlan, d: Dialect) -> list[str]:
    """The first scan's three aggregates of one column."""
    # DuckDB takes the fractions as FLOAT: they are positions, not values.
    probs = "[" + ", ".join(repr(float(p)) for p in np.linspace(0.0, 1.0, plan.grid)) + "]"
    return [
        f"approx_quantile({column}, {probs}::FLOAT[])",
        f"min({column}, {plan.tail_rows + 1})",
        f"max({column}, {plan.tail_rows})",
    ]


def read_sketch(answer: tuple, plan: BinPlan) -> Sketch:
    """A column's three answers (in ``sketch_parts`` order) as a Sketch."""
    grid, low, high = answer
    grid = np.maximum.accumulate(np.asarray(grid, dtype=float))  # quantiles never fall
    lowest, highest = (np.sort(np.asarray(v, dtype=float)) for v in (low, high))
    grid[0], grid[-1] = lowest[0], highest[-1]  # the sketch's ends are not the range's
    return Sketch(grid, lowest, highest)


def starts(n: int, plan: BinPlan, sketch: Sketch, low: float, high: float) -> np.ndarray:
    """Every bin start, ascending: one per tail value, and the file scan's cuts between
    the tails with the equal-count ones read off the sketched grid."""
    probs = np.linspace(0.0, 1.0, plan.grid)
    at = np.interp(bins.positions(n, plan)[:-2] / max(n - 1, 1), probs, sketch.grid)
    low_tail, high_tail = float(sketch.lowest[-1]), float(sketch.highest[0])
    cut = bins.cuts(n, plan, np.r_[at, low_tail, high_tail], low, high)
    inner = cut.edges[(cut.edges >= low_tail) & (cut.edges <= high_tail)]
    tails = np.r_[sketch.lowest[sketch.lowest < low_tail], sketch.highest]
    return np.unique(np.r_[low, tails, inner])


def boundaries(start: np.ndarray) -> np.ndarray:
    """``histogram`` counts x <= boundary above the previous one: bin [s_k, s_k+1) ends at
    the double just below s_k+1; the last bin ends at the maximum (its own start)."""
    return np.r_[np.nextafter(start[1:], -np.inf), start[-1]]


def pieces(start: np.ndarray, sketch: Sketch) -> np.ndarray:
    """Ends of ``PIECES`` equal-width pieces of every bin between the tails, with every bin
    end (``boundaries``) among them: rows per piece place the bin's x."""
    ends = boundaries(start)
    inner = (start >= sketch.lowest[-1]) & (start < sketch.highest[0])
    steps = (np.arange(1, PIECES) / PIECES)[None, :]
    split = start[inner, None] + (ends[inner] - start[inner])[:, None] * steps
    return np.unique(np.r_[ends, split.ravel()])


def histogram_parts(column: str, start: np.ndarray, sketch: Sketch, d: Dialect) -> list[str]:
    """The second scan's two aggregates of one column: rows per piece, events per bin."""
    cut = pieces(start, sketch)
    exact = set(boundaries(start).tolist())
    # Bin ends must be exact doubles; the pieces in between only place x (shorter text).
    listed = ", ".join(d.number(v) if v in exact else repr(float(v)) for v in cut.tolist())
    return [
        f"histogram({column}, [{listed}]::DOUBLE[])",
        f"histogram({column}, {_listed(boundaries(start), d)}) FILTER (WHERE y__ = 1)",
    ]


def read_bins(
    rows: dict | None,
    events: dict | None,
    start: np.ndarray,
    sketch: Sketch,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(x, rows, events) of the non-empty bins, from the two histograms: x is the mean of
    the midpoints of the bin's pieces weighted by their rows (a tail bin's x its value)."""
    ends, cut = boundaries(start), pieces(start, sketch)
    rows, events = rows or {}, events or {}
    per_piece = np.array([float(rows.get(float(b), 0)) for b in cut])
    if per_piece.sum() != sum(float(v) for v in rows.values()):  # every row in a piece
        raise RuntimeError("histogram answered boundaries it was not given")
    low = np.r_[start[0], cut[:-1]]
    mid = (low + cut) / 2
    which = np.searchsorted(ends, cut)  # the bin each piece ends in
    t = np.bincount(which, per_piece, ends.size)
    sums = np.bincount(which, per_piece * mid, ends.size)
    e = np.array([float(events.get(float(b), 0)) for b in ends])
    kept = t > 0
    x = np.clip(sums[kept] / t[kept], start[kept], ends[kept])
    tail = (start < sketch.lowest[-1]) | (start >= sketch.highest[0])
    x = np.where(tail[kept], start[kept], x)  # a tail bin holds one value
    return x, t[kept], e[kept]


def smallest_gap(sketch: Sketch) -> float | None:
    """Smallest positive step among the lowest rows (else the highest, else the grid)."""
    for values in (sketch.lowest, sketch.highest, sketch.grid):
        steps = np.diff(np.unique(values))
        if steps.size:
            return float(steps.min())
    return None

"""Bin edges for a column reduced inside an engine, cut exactly where a file scan cuts.

A file scan (``tui.engine.counts``) sorts a column and starts a bin at positions: half at
equal counts (each moved up to where a new value begins), half at equal steps across the
range, and one at every distinct value among the lowest and highest tail rows. Each start
is also a value test, "x >= e", so the same bins come from a handful of order statistics
the engine computes (``positions``) and one bucket number per row (count of edges <= x).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tui.intake.sources.base import BinPlan


@dataclass(frozen=True)
class Cuts:
    """Where a binned column's bins begin."""

    low_tail: float
    """Values below this keep their own bin."""
    high_tail: float
    """Values at or above this keep their own bin."""
    edges: np.ndarray
    """Ascending bin starts in between: a row's bin is the count of edges <= x."""


def _targets(n: int, plan: BinPlan) -> np.ndarray:
    bins = max(1, plan.max_levels // 2)
    return np.linspace(0, n, bins + 1)[1:-1].astype(np.int64)


def positions(n: int, plan: BinPlan) -> np.ndarray:
    """0-based sorted positions whose values fix the bins of a column of ``n`` finite rows:
    the row before each equal-count target, then the two tail bounds."""
    return np.r_[_targets(n, plan) - 1, plan.tail_rows, n - plan.tail_rows].astype(np.int64)


def cuts(n: int, plan: BinPlan, values: np.ndarray, low: float, high: float) -> Cuts:
    """Bin starts from the values at ``positions(n, plan)`` and the column's range."""
    values = np.asarray(values, dtype=float)
    before = values[:-2]
    # An equal-count cut begins at the first value above the row before its target (the
    # next float up is that test on doubles); at the maximum, at the maximum's own run.
    by_count = np.where(before < high, np.nextafter(before, np.inf), high)
    width_bins = plan.max_levels - plan.max_levels // 2
    by_width = np.linspace(low, high, width_bins + 1)[1:-1]
    low_tail, high_tail = float(values[-2]), float(values[-1])
    edges = np.unique(np.r_[by_count, by_width, low_tail, high_tail])
    return Cuts(low_tail, high_tail, edges[edges > low])


def order_probabilities(n: int, plan: BinPlan) -> np.ndarray:
    """Fractions that pick the rows at ``positions`` from a discrete quantile that returns
    the first value whose cumulative share reaches the fraction (position ceil(p n) - 1),
    half a row inside so that rounding cannot move it."""
    return (positions(n, plan) + 0.5) / n

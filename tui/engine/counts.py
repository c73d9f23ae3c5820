"""Reduce one column and the outcome to counts per distinct value (exact) or per bin.

A one-predictor logistic likelihood depends on the data only through the number of rows
and of events at each distinct x, so grouping by distinct value loses nothing. When a
column has more distinct values than ``max_levels`` (and enough rows for it to pay), rows
are grouped into quantile bins and each bin sits at the mean x of its rows: a close
approximation, measured in DEVELOPERS.md.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

DEFAULT_MAX_LEVELS = 1000
"""Distinct values kept exactly before binning (see DEVELOPERS.md for the choice)."""
EXACT_BELOW_ROWS = 50_000
"""Below this many rows the reduction is always exact."""
_QUANTILE_GRID = 2001


@dataclass(frozen=True)
class ReducedCounts:
    """A column reduced to (x, rows, events) triples, sorted by x."""

    x: np.ndarray
    """Distinct values (exact) or bin means (binned), ascending."""
    trials: np.ndarray
    """Rows at each x (or summed weights)."""
    events: np.ndarray
    """Events at each x (or summed weights of events)."""
    exact: bool
    """True when x holds every distinct value, so every fit equals the row-level fit."""
    grid: np.ndarray | None = None
    """For binned columns: quantiles of the full column at probabilities linspace(0, 1)."""

    @property
    def rows(self) -> float:
        """Total rows."""
        return float(self.trials.sum())

    @property
    def total_events(self) -> float:
        """Total events."""
        return float(self.events.sum())

    @property
    def distinct(self) -> int:
        """Distinct x positions held (distinct values when exact)."""
        return int(self.x.size)

    def quantile(self, probs: np.ndarray | list[float] | float) -> np.ndarray:
        """Quantiles of the rows' x, numpy's default (linear, type 7) definition."""
        probs = np.atleast_1d(np.asarray(probs, dtype=float))
        if not self.exact and self.grid is not None:
            return np.interp(probs, np.linspace(0.0, 1.0, self.grid.size), self.grid)
        return weighted_type7_quantile(self.x, self.trials, probs)

    def subset(self, mask: np.ndarray) -> ReducedCounts:
        """The rows at the x positions where ``mask`` is true."""
        return ReducedCounts(self.x[mask], self.trials[mask], self.events[mask], self.exact)


def weighted_type7_quantile(
    values: np.ndarray, counts: np.ndarray, probs: np.ndarray
) -> np.ndarray:
    """numpy.quantile(np.repeat(values, counts), probs) without expanding the rows.

    ``values`` ascending and distinct, ``counts`` whole numbers of rows.
    """
    cum = np.cumsum(counts)
    total = cum[-1]
    h = (total - 1) * np.asarray(probs, dtype=float)
    lo = np.floor(h)
    frac = h - lo
    # The sorted row at 0-based position i holds values[first j with cum[j] > i].
    i_lo = np.searchsorted(cum, lo, side="right")
    i_hi = np.searchsorted(cum, np.minimum(lo + 1, total - 1), side="right")
    v_lo = values[np.minimum(i_lo, values.size - 1)]
    v_hi = values[np.minimum(i_hi, values.size - 1)]
    return v_lo + frac * (v_hi - v_lo)


def reduce_column(
    x: np.ndarray,
    y: np.ndarray,
    weights: np.ndarray | None = None,
    max_levels: int = DEFAULT_MAX_LEVELS,
    exact_below: int = EXACT_BELOW_ROWS,
) -> ReducedCounts:
    """Reduce finite x (NaN rows dropped) and 0/1 outcome y to counts.

    Exact per distinct value when the column has at most ``max_levels`` distinct values
    or fewer than ``exact_below`` rows; otherwise ``max_levels`` equal-count quantile bins.
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    ok = np.isfinite(x)
    if weights is not None:
        w = np.asarray(weights, dtype=float)
        ok &= w > 0
        w = w[ok]
    else:
        w = None
    x = x[ok]
    y = y[ok]
    if x.size == 0:
        empty = np.zeros(0)
        return ReducedCounts(empty, empty, empty, True)

    order = np.argsort(x, kind="stable")
    xs = x[order]
    ys = y[order]
    ws = np.ones_like(xs) if w is None else w[order]
    starts = np.flatnonzero(np.r_[True, xs[1:] != xs[:-1]])
    if starts.size <= max_levels or xs.size < exact_below or w is not None:
        trials = np.add.reduceat(ws, starts)
        events = np.add.reduceat(ws * ys, starts)
        return ReducedCounts(xs[starts], trials, events, True)

    # Equal-count bins that never split a run of tied values.
    targets = np.linspace(0, xs.size, max_levels + 1)[1:-1].astype(np.int64)
    cut = np.unique(starts[np.minimum(np.searchsorted(starts, targets), starts.size - 1)])
    bounds = np.r_[0, cut[cut > 0]]
    trials = np.add.reduceat(ws, bounds)
    events = np.add.reduceat(ws * ys, bounds)
    means = np.add.reduceat(ws * xs, bounds) / trials
    grid = np.quantile(xs, np.linspace(0.0, 1.0, _QUANTILE_GRID))
    return ReducedCounts(means, trials, events, False, grid)

"""Reduce one column and the outcome to counts per distinct value (exact) or per bin.

A one-predictor logistic likelihood depends on the data only through the number of rows
and of events at each distinct x, so grouping by distinct value loses nothing. When a
column has more distinct values than ``max_levels`` (and ten rows a bin or more), rows
are grouped into at most ``max_levels`` bins and each bin sits at the mean x of its rows:
a close approximation (benchmarks/results/scan_speed.md). Half the bin edges are quantiles (equal
counts), half equal steps across the range (so that the tails of a skewed column are not
lumped into a few wide bins). Knots and cut points still come from quantiles of every row.

Whole numbers over a short range (counts, scores, ages) are counted per value with one
bincount, no sort at all. Other columns sort every row and the rows of the smaller outcome
class with numpy's default sort (vectorised on current CPUs: a million doubles in about
15 ms; sorting each class and merging the runs with the stable sort took about twice as
long). Rows and events per value or per bin are then positions in sorted arrays, so no
row-level index is ever built. From ``LATTICE_ROWS`` rows a column with many values is
binned without any sort, on a fine lattice of its range (``tui.engine.lattice``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tui.engine.lattice import LATTICE_ROWS, lattice_counts

DEFAULT_MAX_LEVELS = 1000
"""Distinct values kept exactly before binning (benchmarks/results/scan_speed.md: why)."""
ROWS_PER_BIN = 10
"""Binning starts where the bins would hold this many rows on average."""
EXACT_BELOW_ROWS = ROWS_PER_BIN * DEFAULT_MAX_LEVELS
"""Below this many rows the reduction is always exact: an exact table then costs at most
about 0.2 s per column, and bins of fewer than ten rows would save little. From here up a
column with many distinct values is binned, which makes its table ten to thirty times
cheaper at 20,000 rows for a score change well inside 2 % or 0.5
(benchmarks/results/wide_speed.md)."""
_QUANTILE_GRID = 2001
TAIL_ROWS = 50
"""Rows at each end of a binned column that keep their own value (each distinct value a bin)."""


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
    """For binned columns: quantiles of every row at probabilities linspace(0, 1, 2001),
    so knots, cut points and groups come from the rows, not from the bin means."""
    values: int | None = None
    """Distinct finite values of the column; None means ``x.size`` (always so when exact)."""
    low: float | None = None
    """Smallest value of the column; None means ``x[0]`` (always so when exact)."""
    high: float | None = None
    """Largest value of the column; None means ``x[-1]`` (always so when exact)."""
    covariates: np.ndarray | None = None
    """Adjusted checks only: covariate design columns, one row per x (rows not reduced)."""
    gap: float | None = None
    """Smallest positive difference between sorted distinct values of the column; None
    means it is read off ``x`` (always so when exact). Bin means are further apart."""
    events_sq: np.ndarray | None = None
    """Survey weights only: sum of the squared weights of the event rows at each x, for the
    sandwich covariance (``robust_wald``); None otherwise."""
    nonevents_sq: np.ndarray | None = None
    """Survey weights only: sum of the squared weights of the non-event rows at each x."""
    values_estimated: bool = False
    """``values`` is an estimate (a long column reduced on a lattice, ``tui.engine.lattice``)."""

    @property
    def survey(self) -> bool:
        """The counts carry the squared weights a design-based (sandwich) test needs."""
        return self.events_sq is not None and self.nonevents_sq is not None

    @property
    def covariate_df(self) -> int:
        """Covariate columns that every fit of this column carries."""
        return 0 if self.covariates is None else int(self.covariates.shape[1])

    @property
    def covariate_means(self) -> np.ndarray:
        """Weighted means of the covariate columns (where fitted curves are drawn)."""
        if self.covariates is None or self.covariates.shape[1] == 0:
            return np.zeros(0)
        return np.average(self.covariates, axis=0, weights=self.trials)

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

    @property
    def distinct_values(self) -> int:
        """Distinct finite values of the column (more than ``distinct`` when binned)."""
        return self.distinct if self.values is None else self.values

    @property
    def minimum(self) -> float | None:
        """Smallest value of the column (a binned column's first bin mean is larger)."""
        if self.low is not None:
            return self.low
        return float(self.x[0]) if self.x.size else None

    @property
    def maximum(self) -> float | None:
        """Largest value of the column."""
        if self.high is not None:
            return self.high
        return float(self.x[-1]) if self.x.size else None

    @property
    def smallest_gap(self) -> float | None:
        """Smallest positive difference between distinct values (None for one value)."""
        if self.gap is not None:
            return self.gap
        return smallest_gap(np.unique(self.x))

    def quantile(self, probs: np.ndarray | list[float] | float) -> np.ndarray:
        """Quantiles of the rows' x, numpy's default (linear, type 7) definition."""
        probs = np.atleast_1d(np.asarray(probs, dtype=float))
        if not self.exact and self.grid is not None:
            return np.interp(probs, np.linspace(0.0, 1.0, self.grid.size), self.grid)
        return weighted_type7_quantile(self.x, self.trials, probs)


def rows_with_covariates(
    x: np.ndarray,
    y: np.ndarray,
    covariates: np.ndarray,
    weights: np.ndarray | None = None,
    squares: bool = False,
) -> ReducedCounts:
    """Row-level counts for an adjusted check: every complete row kept, sorted by x.

    With covariates the likelihood no longer depends on x alone, so rows cannot be pooled;
    each row keeps its own covariate values (and weight, as its number of trials).
    ``squares`` keeps each row's squared weight (survey weights: ``events_sq``).
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    covariates = np.asarray(covariates, dtype=float).reshape(x.size, -1)
    ok = np.isfinite(x) & np.all(np.isfinite(covariates), axis=1)
    w = np.ones(x.size) if weights is None else np.asarray(weights, dtype=float)
    ok &= w > 0
    order = np.argsort(x[ok], kind="stable")
    xs = x[ok][order]
    ws = w[ok][order]
    distinct = int(np.unique(xs).size)
    low = float(xs[0]) if xs.size else None
    high = float(xs[-1]) if xs.size else None
    ys = y[ok][order]
    return ReducedCounts(
        xs,
        ws,
        ws * ys,
        True,
        values=distinct,
        low=low,
        high=high,
        covariates=covariates[ok][order],
        events_sq=ws * ws * ys if squares else None,
        nonevents_sq=ws * ws * (1.0 - ys) if squares else None,
    )


def smallest_gap(xs: np.ndarray) -> float | None:
    """Smallest positive step in ascending ``xs`` (None when there is none)."""
    if xs.size < 2:
        return None
    steps = xs[1:] - xs[:-1]
    # A masked minimum: no copy of the positive steps (a million-row column's is 8 MB).
    least = float(np.min(steps, where=steps > 0, initial=np.inf))
    return least if np.isfinite(least) else None


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


def sorted_quantile(xs: np.ndarray, probs: np.ndarray) -> np.ndarray:
    """numpy.quantile(xs, probs) for ascending ``xs``, by indexing instead of partitioning.

    Follows numpy's own virtual index and interpolation step by step, so the figures are
    the same numbers numpy gives.
    """
    n = xs.size
    h = (n - 1) * np.asarray(probs, dtype=float)
    lo = np.floor(h)
    t = h - lo
    lo = np.clip(lo, 0, n - 1).astype(np.int64)
    hi = np.minimum(lo + 1, n - 1)
    a, b = xs[lo], xs[hi]
    diff = b - a
    out = a + diff * t
    # numpy's lerp counts back from the upper value past the midpoint.
    upper = t >= 0.5
    out[upper] = b[upper] - diff[upper] * (1.0 - t[upper])
    return out


def _equal_count_bounds(xs: np.ndarray, bins: int) -> np.ndarray:
    """First sorted position of each of about ``bins`` equal-count bins that never split a
    run of tied values, read off the sorted values without listing every run start."""
    n = xs.size
    targets = np.linspace(0, n, bins + 1)[1:-1].astype(np.int64)
    # The first run start at or after each target: the target itself when a new value
    # begins there, else the end of the run of ties that covers it.
    cut = np.searchsorted(xs, xs[targets], side="right")
    begins = xs[targets] != xs[targets - 1]
    cut[begins] = targets[begins]
    # No run starts after the target: the last run's start.
    cut[cut >= n] = np.searchsorted(xs, xs[-1], side="left")
    return cut


def _bin_bounds(xs: np.ndarray, bins: int) -> np.ndarray:
    """First sorted position of each of at most ``bins`` bins: half the cuts at equal
    counts (quantile bins), half at equal steps across the range, so that no bin is wide
    either (the wide bins of a skewed column's tail are what binning at quantiles alone
    gets wrong; benchmarks/results/scan_speed.md). Every cut falls where a new value begins,
    so ties are never split."""
    by_count = _equal_count_bounds(xs, max(1, bins // 2))
    steps = np.linspace(xs[0], xs[-1], bins - bins // 2 + 1)[1:-1]
    by_width = np.searchsorted(xs, steps, side="left")  # the first position of a value
    cut = np.unique(np.r_[by_count, by_width, _tail_starts(xs)])
    return np.r_[0, cut[(cut > 0) & (cut < xs.size)]]


def _tail_starts(xs: np.ndarray) -> np.ndarray:
    """Start of each distinct value among the ``TAIL_ROWS`` lowest and highest rows: the
    extremes keep their own x, where a shift puts the steepest part of a log or negative
    power and a bin mean would sit far from its rows (benchmarks/results/binned_accuracy.md)."""
    head = np.unique(xs[: TAIL_ROWS + 1])
    tail = np.unique(xs[-TAIL_ROWS:])
    return np.searchsorted(xs, np.r_[head, tail], side="left")


def reduce_column(
    x: np.ndarray,
    y: np.ndarray,
    weights: np.ndarray | None = None,
    max_levels: int = DEFAULT_MAX_LEVELS,
    exact_below: int = EXACT_BELOW_ROWS,
    squares: bool = False,
) -> ReducedCounts:
    """Reduce finite x (NaN rows dropped) and 0/1 outcome y to counts.

    Exact per distinct value when the column has at most ``max_levels`` distinct values
    or fewer than ``exact_below`` rows; otherwise at most ``max_levels`` bins, cut at
    quantiles and at equal steps across the range, each at the mean x of its rows.
    ``squares`` (survey weights) adds the squared weights of events and non-events per
    value or bin, which the sandwich covariance needs (``events_sq``, ``nonevents_sq``).
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y)
    ok = np.isfinite(x)
    if weights is None and not squares and _zero_one(y):
        event = y == 1 if y.dtype != bool else y
        if not ok.all():
            x, event = x[ok], event[ok]
        return _reduce_binary(x, event, max_levels, exact_below)
    return _reduce_general(x, y.astype(float), ok, weights, max_levels, exact_below, squares)


def _zero_one(y: np.ndarray) -> bool:
    if y.dtype == bool or y.size == 0:
        return True
    if y.min() < 0 or y.max() > 1:
        return False
    # Whole numbers between 0 and 1 are 0 or 1; fractions need a look at every value.
    return y.dtype.kind in "iu" or bool(np.all((y == 0) | (y == 1)))


def _reduce_binary(
    x: np.ndarray, event: np.ndarray, max_levels: int, exact_below: int
) -> ReducedCounts:
    """Unweighted rows with a 0/1 outcome: counts per whole number, or from sorted runs."""
    if x.size == 0:
        empty = np.zeros(0)
        return ReducedCounts(empty, empty, empty, True)
    n = x.size
    counted = _whole_number_counts(x, event, max_levels, exact_below)
    if counted is not None:
        return counted
    if n >= max(LATTICE_ROWS, exact_below):
        whole = np.array_equal(np.floor(x[:64]), x[:64]) and np.array_equal(np.floor(x), x)
        got = lattice_counts(x, event, max_levels, TAIL_ROWS, _QUANTILE_GRID, whole)
        if got is not None:
            b = got.bins
            return ReducedCounts(
                b.x,
                b.trials,
                b.events,
                False,
                b.grid,
                got.values,
                b.low,
                b.high,
                gap=b.gap,
                values_estimated=got.values_estimated,
            )
    xs, xm, minority_events = _sorted_by_class(x, event)
    changes = xs[1:] != xs[:-1]
    distinct = int(np.count_nonzero(changes)) + 1
    if distinct <= max_levels or n < exact_below:
        starts = np.flatnonzero(np.r_[True, changes])
        values = xs[starts]
        trials = np.diff(np.r_[starts, n]).astype(float)
        # Each value of the smaller class sits at its own distinct value: one search of
        # the smaller class among the values, then a count (cheaper than two searches
        # of every value among that class).
        inside = np.bincount(np.searchsorted(values, xm), minlength=values.size)
        events = inside if minority_events else trials - inside
        return ReducedCounts(values, trials, events.astype(float), True)

    bounds = _bin_bounds(xs, max_levels)
    trials = np.diff(np.r_[bounds, n]).astype(float)
    # Bins never split ties, so bin i holds exactly the values in [xs[b_i], xs[b_i+1]).
    inside = np.diff(np.r_[np.searchsorted(xm, xs[bounds], side="left"), xm.size])
    events = (inside if minority_events else trials - inside).astype(float)
    means = np.add.reduceat(xs, bounds) / trials
    grid = sorted_quantile(xs, np.linspace(0.0, 1.0, _QUANTILE_GRID))
    return ReducedCounts(
        means,
        trials,
        events,
        False,
        grid,
        distinct,
        float(xs[0]),
        float(xs[-1]),
        gap=smallest_gap(xs),
    )


LATTICE_SPAN = 1 << 16
"""Whole-number columns whose largest value exceeds the smallest by at most this are
counted per value with a bincount (as many slots as the span; no sort)."""


def _whole_number_counts(
    x: np.ndarray, event: np.ndarray, max_levels: int, exact_below: int
) -> ReducedCounts | None:
    """Exact counts per value of finite whole numbers over a short range, from one
    bincount of rows and one of events; None when the column is not such, or when it has
    so many values that it is binned (the sorted path bins it)."""
    if not np.array_equal(np.floor(x[:64]), x[:64]):  # most columns fail here, at once
        return None
    low, high = float(x.min()), float(x.max())
    # Below 2**52 whole numbers and their differences are exact in a double.
    if high - low > LATTICE_SPAN or max(abs(low), abs(high)) >= 2.0**52:
        return None
    if not np.array_equal(np.floor(x), x):
        return None
    slot = (x - low).astype(np.intp)
    size = int(high - low) + 1
    trials = np.bincount(slot, minlength=size)
    present = np.flatnonzero(trials)
    if present.size > max_levels and x.size >= exact_below:
        return None
    events = np.bincount(slot[event], minlength=size)[present]
    values = low + present.astype(float)
    return ReducedCounts(values, trials[present].astype(float), events.astype(float), True)


def _sorted_by_class(x: np.ndarray, event: np.ndarray) -> tuple[np.ndarray, np.ndarray, bool]:
    """Every value sorted, the values of the smaller outcome class sorted, and whether that
    class is the events. The values are the same numbers ``np.sort(x)`` gives."""
    events = int(np.count_nonzero(event))
    minority_events = events <= x.size - events
    minority = event if minority_events else ~event
    # The default (vectorised) sort: sorting the two classes and merging them with the
    # stable sort cost more than sorting every row again (numpy 2.4, AVX-512).
    return np.sort(x), np.sort(x[minority]), minority_events


def _reduce_general(
    x: np.ndarray,
    y: np.ndarray,
    ok: np.ndarray,
    weights: np.ndarray | None,
    max_levels: int,
    exact_below: int,
    squares: bool = False,
) -> ReducedCounts:
    """Weighted rows, or an outcome not coded 0/1: sums over one stable ordering of rows."""
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
        return ReducedCounts(xs[starts], trials, events, True, **_squares(ws, ys, starts, squares))

    bounds = _bin_bounds(xs, max_levels)
    trials = np.add.reduceat(ws, bounds)
    events = np.add.reduceat(ws * ys, bounds)
    means = np.add.reduceat(ws * xs, bounds) / trials
    grid = sorted_quantile(xs, np.linspace(0.0, 1.0, _QUANTILE_GRID))
    return ReducedCounts(
        means,
        trials,
        events,
        False,
        grid,
        int(starts.size),
        float(xs[0]),
        float(xs[-1]),
        gap=smallest_gap(xs),
        **_squares(ws, ys, bounds, squares),
    )


def _squares(
    ws: np.ndarray, ys: np.ndarray, starts: np.ndarray, wanted: bool
) -> dict[str, np.ndarray | None]:
    """Squared weights of the event and non-event rows per cell (rows sorted by x, cells
    beginning at ``starts``): a row-level sandwich summed cell by cell needs nothing else."""
    if not wanted:
        return {"events_sq": None, "nonevents_sq": None}
    w2 = ws * ws
    return {
        "events_sq": np.add.reduceat(w2 * ys, starts),
        "nonevents_sq": np.add.reduceat(w2 * (1.0 - ys), starts),
    }

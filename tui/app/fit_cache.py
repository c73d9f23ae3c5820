"""Full candidate fits of one column, computed once per request and kept.

The inspection screen asks for a column's fits under some groups, knots and hand-entered
cut points, with the covariates and weights of the column's score (its ``Basis``); a worker
thread computes them with the engine and the result is cached, so returning to a column (or
to a setting seen before) is instant.
"""

from __future__ import annotations

import threading
from collections import OrderedDict
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from tui.app.adjusting import Basis
from tui.engine.adjust import Adjustment
from tui.engine.compare import ComparisonTable, compare_forms, fit_candidate
from tui.engine.counts import ReducedCounts
from tui.engine.forms.base import Candidate
from tui.engine.forms.hinge import HingeCandidate
from tui.engine.forms.indicator import IndicatorCandidate
from tui.engine.forms.linear import LinearCandidate
from tui.engine.forms.registry import default_candidates
from tui.engine.groups import LogitGroup, logit_groups
from tui.engine.scan import ScanSettings, reduce_for_scan
from tui.engine.smoother import smoothed_log_odds
from tui.intake.dataset import ColumnarDataset, Dataset

TAIL_SHARE = 0.05
"""The tails named on the screen are the quantiles at this share and one minus it."""
ROW_LEVEL_KEPT = 6
"""Adjusted fits keep every row (with its covariates): only this many are kept, the most
recently used, so a long review of a large file does not fill the memory."""


@dataclass(frozen=True)
class FitRequest:
    """Which fits of which column."""

    column: str
    """Column name."""
    groups: int
    """Quantile groups of the plot (and of the bands form)."""
    knots: int
    """Knots of the spline form."""
    cuts: tuple[float, ...] = ()
    """Indicator cut points entered by hand."""
    hinges: tuple[float, ...] = ()
    """Hinge knots entered by hand."""
    basis: Basis = field(default_factory=Basis)
    """Covariates and weights in every fit (those of the column's score)."""

    def by_hand(self) -> list[Candidate]:
        """The candidates made from hand-entered numbers."""
        hand: list[Candidate] = [HingeCandidate(knot=k) for k in self.hinges]
        return hand + [IndicatorCandidate(cut=c) for c in self.cuts]

    def candidates(self) -> list[Candidate]:
        """The engine's default candidates, then the hand-entered ones."""
        return default_candidates(self.groups, self.knots) + self.by_hand()

    def hand_labels(self) -> set[str]:
        """Labels of the candidates entered by hand."""
        return {c.label for c in self.by_hand()}


@dataclass(frozen=True)
class ColumnFits:
    """Everything the inspection screen draws for one request."""

    request: FitRequest
    """What was asked."""
    counts: ReducedCounts
    """The column reduced to counts per distinct value (one per row when adjusted)."""
    groups: tuple[LogitGroup, ...]
    """Empirical logits of the quantile groups."""
    table: ComparisonTable | None
    """Every candidate fitted; None when the column cannot be fitted."""
    tails: tuple[float, float] | None
    """The ``TAIL_SHARE`` and ``1 - TAIL_SHARE`` quantiles of x (percentiles: a lumpy
    column may hold far more than that share of its rows at either value)."""
    problem: str | None = None
    """Why the table is missing or holds the linear form only."""
    smoother: tuple[np.ndarray, np.ndarray] | None = None
    """LOWESS of the outcome on x, on the log-odds scale (x, log-odds); None when absent."""


class FitCache:
    """Counts and fits per request; safe to call from worker threads."""

    def __init__(
        self,
        dataset: Dataset | ColumnarDataset,
        max_levels: int,
        adjustment: Callable[[Basis], Adjustment | None] = lambda basis: None,
    ) -> None:
        self._dataset = dataset
        self._max_levels = max_levels
        self._adjustment = adjustment
        self._lock = threading.Lock()
        self._counts: dict[tuple[str, Basis], ReducedCounts] = {}
        self._fits: dict[FitRequest, ColumnFits] = {}
        # Row-level entries, least recently used first: their counts hold every row.
        self._row_counts: OrderedDict[tuple[str, Basis], ReducedCounts] = OrderedDict()
        self._row_fits: OrderedDict[FitRequest, ColumnFits] = OrderedDict()

    def cached(self, request: FitRequest) -> ColumnFits | None:
        """The fits if already computed."""
        with self._lock:
            found = self._fits.get(request)
            if found is None and request in self._row_fits:
                self._row_fits.move_to_end(request)
                found = self._row_fits[request]
            return found

    def counts(self, column: str, basis: Basis | None = None) -> ReducedCounts:
        """The column reduced to counts (computed once per basis), exactly as the scan
        reduces it: with covariates every row stays a row."""
        basis = Basis() if basis is None else basis
        key = (column, basis)
        with self._lock:
            found = self._counts.get(key)
            if found is None and key in self._row_counts:
                self._row_counts.move_to_end(key)
                found = self._row_counts[key]
        if found is None:
            x = self._dataset.raw_values(column)
            settings = ScanSettings(max_levels=self._max_levels)
            adjust = self._adjustment(basis)
            y = self._dataset.outcome.y
            found = reduce_for_scan(x, y, settings, adjust, column).counts
            with self._lock:
                if found.covariates is None:
                    self._counts[key] = found
                else:
                    _keep_recent(self._row_counts, key, found)
        return found

    def fits(self, request: FitRequest) -> ColumnFits:
        """Compute (or recall) the fits of a request. Slow: call it from a worker."""
        found = self.cached(request)
        if found is not None:
            return found
        counts = self.counts(request.column, request.basis)
        result = _compute(request, counts)
        with self._lock:
            if counts.covariates is None:
                self._fits[request] = result
            else:
                _keep_recent(self._row_fits, request, result)
        return result


def _keep_recent(kept: OrderedDict, key: object, value: object) -> None:
    """Add an entry as the most recent; drop the oldest beyond ``ROW_LEVEL_KEPT``."""
    kept[key] = value
    kept.move_to_end(key)
    while len(kept) > ROW_LEVEL_KEPT:
        kept.popitem(last=False)


def _compute(request: FitRequest, counts: ReducedCounts) -> ColumnFits:
    if counts.distinct == 0:
        return ColumnFits(request, counts, (), None, None, "no finite values")
    groups = tuple(logit_groups(counts, request.groups))
    smoother = smoothed_log_odds(counts)
    low, high = (float(v) for v in counts.quantile([TAIL_SHARE, 1 - TAIL_SHARE]))
    tails = (low, high)
    events, rows = counts.total_events, counts.rows
    if events == 0 or events == rows:
        problem = "every row has the same outcome: no form can be fitted"
        return ColumnFits(request, counts, groups, None, tails, problem, smoother)
    if counts.distinct_values <= 2:
        # Two values (or one) hold no curve: only the linear form applies.
        linear = ComparisonTable((fit_candidate(LinearCandidate(), counts),), None)
        problem = (
            "one value only: nothing to compare; set it aside (x)"
            if counts.distinct_values == 1
            else "two values only: a straight line joins them, so only linear applies"
        )
        return ColumnFits(request, counts, groups, linear, tails, problem, smoother)
    with np.errstate(all="ignore"):
        table = compare_forms(
            counts, request.candidates(), groups=request.groups, knots=request.knots
        )
    return ColumnFits(request, counts, groups, table, tails, None, smoother)

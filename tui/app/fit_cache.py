"""Full candidate fits of one column, computed once per request and kept.

The inspection screen asks for a column's fits under some groups, knots and hand-entered
cut points; a worker thread computes them with the engine and the result is cached, so
returning to a column (or to a setting seen before) is instant.
"""

from __future__ import annotations

import threading
from dataclasses import dataclass

import numpy as np

from tui.engine.compare import ComparisonTable, compare_forms, fit_candidate
from tui.engine.counts import ReducedCounts, reduce_column
from tui.engine.forms.base import Candidate
from tui.engine.forms.hinge import HingeCandidate
from tui.engine.forms.indicator import IndicatorCandidate
from tui.engine.forms.linear import LinearCandidate
from tui.engine.forms.registry import default_candidates
from tui.engine.groups import LogitGroup, logit_groups
from tui.intake.dataset import Dataset

TAIL_SHARE = 0.05
"""Share of rows in each tail named on the screen (where the data thin out)."""


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
    """The column reduced to counts per distinct value."""
    groups: tuple[LogitGroup, ...]
    """Empirical logits of the quantile groups."""
    table: ComparisonTable | None
    """Every candidate fitted; None when the column cannot be fitted."""
    tails: tuple[float, float] | None
    """The x below which and above which ``TAIL_SHARE`` of the rows lie."""
    problem: str | None = None
    """Why the table is missing or holds the linear form only."""


class FitCache:
    """Counts and fits per request; safe to call from worker threads."""

    def __init__(self, dataset: Dataset, max_levels: int) -> None:
        self._dataset = dataset
        self._max_levels = max_levels
        self._lock = threading.Lock()
        self._counts: dict[str, ReducedCounts] = {}
        self._fits: dict[FitRequest, ColumnFits] = {}

    def cached(self, request: FitRequest) -> ColumnFits | None:
        """The fits if already computed."""
        with self._lock:
            return self._fits.get(request)

    def counts(self, column: str) -> ReducedCounts:
        """The column reduced to counts (computed once)."""
        with self._lock:
            found = self._counts.get(column)
        if found is None:
            x = self._dataset.raw_values(column)
            found = reduce_column(x, self._dataset.outcome.y, max_levels=self._max_levels)
            with self._lock:
                self._counts[column] = found
        return found

    def fits(self, request: FitRequest) -> ColumnFits:
        """Compute (or recall) the fits of a request. Slow: call it from a worker."""
        found = self.cached(request)
        if found is not None:
            return found
        counts = self.counts(request.column)
        result = _compute(request, counts)
        with self._lock:
            self._fits[request] = result
        return result


def _compute(request: FitRequest, counts: ReducedCounts) -> ColumnFits:
    if counts.distinct == 0:
        return ColumnFits(request, counts, (), None, None, "no finite values")
    groups = tuple(logit_groups(counts, request.groups))
    low, high = (float(v) for v in counts.quantile([TAIL_SHARE, 1 - TAIL_SHARE]))
    tails = (low, high)
    events, rows = counts.total_events, counts.rows
    if events == 0 or events == rows:
        problem = "every row has the same outcome: no form can be fitted"
        return ColumnFits(request, counts, groups, None, tails, problem)
    if counts.distinct <= 2:
        # Two values (or one) hold no curve: only the linear form applies.
        linear = ComparisonTable((fit_candidate(LinearCandidate(), counts),), None)
        problem = (
            "one value only: nothing to compare; set it aside (x)"
            if counts.distinct == 1
            else "two values only: a straight line joins them, so only linear applies"
        )
        return ColumnFits(request, counts, groups, linear, tails, problem)
    with np.errstate(all="ignore"):
        table = compare_forms(
            counts, request.candidates(), groups=request.groups, knots=request.knots
        )
    return ColumnFits(request, counts, groups, table, tails)

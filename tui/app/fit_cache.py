"""Full candidate fits of one column, computed once per request and kept.

The inspection screen asks for a column's fits under some groups, knots and hand-entered
cut points, with the covariates and weights of the column's score (its ``Basis``); a worker
thread has the engine (``fit_column``) compute them and the result is cached here, so
returning to a column (or to a setting seen before) is instant. Nothing is fitted here.
"""

from __future__ import annotations

import threading
from collections import OrderedDict
from collections.abc import Callable
from dataclasses import dataclass, field

from tui.app.basis import Basis
from tui.engine.adjust import Adjustment
from tui.engine.column_fits import CandidateSet, Fitted, fit_column
from tui.engine.counts import ReducedCounts
from tui.engine.exact_score import exact_score
from tui.engine.forms.indicator import BELOW
from tui.engine.reduced_data import ReducedData
from tui.engine.scan import ColumnScan, ScanSettings, reduce_for_scan
from tui.engine.stability import DEFAULT_RESAMPLES, DEFAULT_SEED, SelectionShares, selection_shares
from tui.intake.dataset import ColumnarDataset, Dataset

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
    side: str = BELOW
    """Which side of its cut point an indicator reads 1."""

    @property
    def wanted(self) -> CandidateSet:
        """The engine's candidate set of this request."""
        return CandidateSet(self.groups, self.knots, self.cuts, self.hinges, self.side)

    def hand_labels(self) -> set[str]:
        """Labels of the candidates entered by hand."""
        return self.wanted.hand_labels()


@dataclass(frozen=True, kw_only=True)
class ColumnFits(Fitted):
    """The engine's fits of one request, with the request they answer."""

    request: FitRequest
    """What was asked."""


class FitCache:
    """Counts and fits per request; safe to call from worker threads."""

    def __init__(
        self,
        dataset: Dataset | ColumnarDataset | ReducedData,
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
        self._shares: dict[FitRequest, SelectionShares | None] = {}
        self._exact: dict[tuple[str, ScanSettings], ColumnScan | None] = {}

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
        if found is None and isinstance(self._dataset, ReducedData):
            found = self._dataset.counts(column)  # the engine's counts; bases are plain here
            with self._lock:
                self._counts[key] = found
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

    def cached_shares(self, request: FitRequest) -> tuple[bool, SelectionShares | None]:
        """(computed already, the shares) of a request."""
        with self._lock:
            return request in self._shares, self._shares.get(request)

    def shares(self, request: FitRequest) -> SelectionShares | None:
        """Bootstrap selection shares of a request's candidates (``DEFAULT_RESAMPLES``
        resamples, ``DEFAULT_SEED``); None for adjusted fits. Slow: call from a worker."""
        done, found = self.cached_shares(request)
        if done:
            return found
        fits = self.fits(request)
        result = None
        if fits.table is not None and fits.problem is None:
            candidates = request.wanted.candidates()
            result = selection_shares(
                fits.counts, fits.table, candidates, DEFAULT_RESAMPLES, DEFAULT_SEED
            )
        with self._lock:
            self._shares[request] = result
        return result

    def exact_score(self, column: str, settings: ScanSettings) -> ColumnScan | None:
        """The score of a column the scan binned, refitted on every distinct value (the
        engine's ``exact_score``; None when too many values). Call it from a worker."""
        key = (column, settings)
        with self._lock:
            if key in self._exact:
                return self._exact[key]
        if isinstance(self._dataset, ReducedData):
            return None  # the rows stay in the engine: a binned source column keeps its score
        x = self._dataset.raw_values(column)
        found = exact_score(x, self._dataset.outcome.y, settings, column)
        with self._lock:
            self._exact[key] = found
        return found


def _keep_recent(kept: OrderedDict, key: object, value: object) -> None:
    """Add an entry as the most recent; drop the oldest beyond ``ROW_LEVEL_KEPT``."""
    kept[key] = value
    kept.move_to_end(key)
    while len(kept) > ROW_LEVEL_KEPT:
        kept.popitem(last=False)


def _compute(request: FitRequest, counts: ReducedCounts) -> ColumnFits:
    fitted = fit_column(counts, request.wanted)
    return ColumnFits(**vars(fitted), request=request)

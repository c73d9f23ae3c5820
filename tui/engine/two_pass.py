"""Scores first, forms second: a scan in two passes over the same reduced counts.

The first pass reads and reduces every column once and fits only linear and the scoring
spline: the score, p-value, flags and shape hint of every column, a few milliseconds each,
so a list can be ranked (q-values need every score) long before the forms are known. The
second pass fits every candidate form of each column on the counts the first pass kept,
most non-linear columns first, and gives the best form and ΔAIC; a column can be moved to
the front of that queue (``prioritise``), as when a user opens it. Second-pass results are
exactly those of a one-pass scan (``scan_columns``): the same code on the same counts.

The counts of every column are held between the passes: a binned column keeps at most a
few thousand numbers (about 40 kB), an exact one three numbers per distinct value.
"""

from __future__ import annotations

import math
import threading
from collections.abc import Callable, Iterable, Iterator, Sequence
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from dataclasses import dataclass
from multiprocessing.context import BaseContext
from typing import Literal

import numpy as np

from tui.engine.adjust import Adjustment
from tui.engine.fitting import one_blas_thread
from tui.engine.runner import (
    AHEAD_PER_WORKER,
    ValuesOf,
    _quiet_worker,
    _start_method,
    default_workers,
)
from tui.engine.scan import ColumnScan, ReducedColumn, ScanSettings, rank, reduce_for_scan
from tui.engine.scan import scan_reduced as _scan_reduced

Stage = Literal["score", "forms"]

ManyValuesOf = Callable[[Sequence[str]], list[np.ndarray]]
"""Returns several columns' values at once (as ``ValuesOf`` each), in the order asked."""

BATCH_COLUMNS = 8
"""Columns a forked worker reads and scores per first-pass task: one Parquet read of eight
columns costs about a quarter of eight reads, and fewer tasks cost the parent less."""
BATCH_VALUES = 200_000
"""Values a worker holds per batch at most (rows x columns): long columns go one a task."""
BATCHES_PER_WORKER = 4
"""Batches are kept small enough that every worker gets at least this many."""
FORMS_BATCH_VALUES = 4_000
"""Second pass: columns whose counts hold fewer x positions than this go several a task
(up to ``BATCH_COLUMNS``, and this many positions in all), so that the parent's share of a
task (sending the counts, receiving the result) is paid once for them; a column asked for
(``prioritise``) always goes alone."""


@dataclass(frozen=True)
class ScanStep:
    """One result of a two-pass scan."""

    stage: Stage
    """``score``: first pass (no best form yet); ``forms``: the column's full result."""
    scan: ColumnScan
    """The column's result (q-value left for ``rank``)."""
    done: int
    """Results of this stage so far, this one included."""
    total: int
    """Columns in the scan: the stage is over when ``done == total``."""


class TwoPassScan:
    """Iterate to run the scan: every column's ``score`` step, then every column's
    ``forms`` step. ``prioritise`` may be called from any thread while iterating.

    ``workers`` as in ``scan_columns`` (default: every core; 1 scans in this process).
    Worker processes are forked when this process runs a single thread (they read the
    columns themselves); otherwise they come from a fork server and receive counts reduced
    here. Closing the iterator early stops the scan.
    """

    def __init__(
        self,
        columns: Iterable[str],
        values_of: ValuesOf,
        y: np.ndarray,
        settings: ScanSettings = ScanSettings(),
        *,
        workers: int | None = None,
        adjust: Adjustment | None = None,
        reduced_of: Callable[[str], ReducedColumn] | None = None,
        first_here: bool = False,
        many_of: ManyValuesOf | None = None,
    ) -> None:
        """``reduced_of`` hands over counts reduced elsewhere (a source's engine); then
        ``values_of`` and ``y`` are not read and workers receive the counts.
        ``first_here``: the first pass runs in the calling thread while the worker
        processes start, and only the second pass uses them. A process that cannot fork
        reduces every column itself anyway and the first pass's fits take milliseconds,
        so the first scores come without waiting for workers to start.
        ``many_of`` reads several columns at once (``values_of``'s values): forked workers
        then read their batch of columns in one call."""
        self._first_here = first_here
        self._many_of = many_of
        self.columns = list(columns)
        self._reduced_of = reduced_of
        self._values_of, self._y, self._settings, self._adjust = values_of, y, settings, adjust
        count = default_workers() if workers is None else max(1, int(workers))
        self._workers = min(count, len(self.columns))
        self._lock = threading.Lock()
        self._queue: list[str] = []
        self._reduced: dict[str, ReducedColumn] = {}
        self._first_results: dict[str, ColumnScan] = {}
        self._names = set(self.columns)
        self._ordered = False  # the second pass's queue is built
        self._jumped: list[str] = []  # asked for during the first pass, latest first
        self._asked: set[str] = set()  # asked for at any time: fitted alone, not batched

    def prioritise(self, column: str) -> bool:
        """Fit this column's forms next (also when asked during the first pass); False
        when the column is not in the scan or its forms are already fitted or fitting."""
        with self._lock:
            if column in self._queue:
                self._queue.remove(column)
                self._queue.insert(0, column)
                self._asked.add(column)
                return True
            if self._ordered or column not in self._names:
                return False
            self._jumped = [column] + [c for c in self._jumped if c != column]
            self._asked.add(column)
            return True

    def __iter__(self) -> Iterator[ScanStep]:
        total = len(self.columns)
        scored: list[ColumnScan] = []
        if self._workers <= 1:
            yield from self._first_in_thread()
            with one_blas_thread():
                for done, name in enumerate(iter(self._next, None), start=1):
                    yield ScanStep("forms", self._second(name), done, total)
            return
        context = _start_method()
        if self._first_here:
            yield from self._first_here_then_workers(context)
            return
        forked = context.get_start_method() == "fork" and self._reduced_of is None
        if forked:
            executor = ProcessPoolExecutor(
                self._workers,
                context,
                initializer=_inherit,
                initargs=(self._values_of, self._y, self._settings, self._adjust, self._many_of),
            )
        else:
            executor = ProcessPoolExecutor(self._workers, context, initializer=_quiet_worker)
        limit = AHEAD_PER_WORKER * self._workers
        finished = False
        try:
            pending: dict[Future[list[tuple[ColumnScan, ReducedColumn | None]]], list[str]] = {}
            size = self._batch_size() if forked else 1
            batches = (self.columns[i : i + size] for i in range(0, total, size))
            while True:
                while len(pending) < limit:
                    batch = next(batches, None)
                    if batch is None:
                        break
                    if forked:
                        pending[executor.submit(_first_named, batch)] = batch
                    else:
                        (name,) = batch
                        reduced = self._reduce(name)
                        self._reduced[name] = reduced
                        task = executor.submit(_first_given, name, reduced, self._settings)
                        pending[task] = batch
                if not pending:
                    break
                done, _ = wait(pending, return_when=FIRST_COMPLETED)
                for future in done:
                    batch = pending.pop(future)
                    for name, (scan, reduced) in zip(batch, future.result(), strict=True):
                        kept = self._keep(
                            name, self._reduced[name] if reduced is None else reduced, scan
                        )
                        scored.append(kept)
                        if len(scored) == total:
                            self._order(scored)
                        yield ScanStep("score", kept, len(scored), total)
            yield from self._second_on(executor, limit)
            finished = True
        finally:
            _shut(executor, finished)

    def _batch_size(self) -> int:
        """Columns per forked first-pass task (see ``BATCH_COLUMNS``)."""
        rows = max(1, int(np.asarray(self._y).size))
        spread = math.ceil(len(self.columns) / (BATCHES_PER_WORKER * self._workers))
        return max(1, min(BATCH_COLUMNS, BATCH_VALUES // rows, spread))

    def _first_here_then_workers(self, context: BaseContext) -> Iterator[ScanStep]:
        """First pass in this thread; second pass on workers started meanwhile."""
        executor = ProcessPoolExecutor(self._workers, context, initializer=_quiet_worker)
        # The workers start during the first pass. Starting the first one waits for a
        # fork server to boot (seconds on a busy machine): a helper thread waits instead.
        threading.Thread(target=_start, args=(executor, self._workers), daemon=True).start()
        finished = False
        try:
            yield from self._first_in_thread()
            yield from self._second_on(executor, AHEAD_PER_WORKER * self._workers)
            finished = True
        finally:
            _shut(executor, finished)

    def _first_in_thread(self) -> Iterator[ScanStep]:
        """The first pass in this thread: read, reduce and score each column."""
        total = len(self.columns)
        scored: list[ColumnScan] = []
        with one_blas_thread():
            for name in self.columns:
                reduced = self._reduce(name)
                scored.append(self._keep(name, reduced, _first(name, reduced, self._settings)))
                if len(scored) == total:
                    self._order(scored)
                yield ScanStep("score", scored[-1], len(scored), total)

    def _second_on(self, executor: ProcessPoolExecutor, limit: int) -> Iterator[ScanStep]:
        """The second pass on worker processes, on the counts the first pass kept."""
        total = len(self.columns)
        second: dict[Future[list[ColumnScan]], list[str]] = {}
        finished = 0
        while True:
            while len(second) < limit:
                batch: list[tuple[str, ReducedColumn]] = []
                skipped: list[ColumnScan] = []
                while len(batch) < BATCH_COLUMNS:
                    name = self._next_for(batch)
                    if name is None:
                        break
                    reduced = self._reduced.pop(name)
                    if not _needs_forms(reduced, self._first_results[name]):
                        skipped.append(self._first_results[name])
                        continue
                    batch.append((name, reduced))
                    if not self._room_after(batch):
                        break
                for scan in skipped:
                    finished += 1
                    yield ScanStep("forms", scan, finished, total)
                if not batch:
                    break
                task = executor.submit(_forms_given_many, batch, self._settings)
                second[task] = [name for name, _ in batch]
            if not second:
                break
            done, _ = wait(second, return_when=FIRST_COMPLETED)
            for future in done:
                second.pop(future)
                for scan in future.result():
                    finished += 1
                    yield ScanStep("forms", scan, finished, total)

    def _next_for(self, batch: list[tuple[str, ReducedColumn]]) -> str | None:
        """The next column for a second-pass batch; a column asked for starts a batch of
        its own (None once the batch holds others)."""
        with self._lock:
            if not self._queue:
                return None
            if batch and (batch[0][0] in self._asked or self._queue[0] in self._asked):
                return None
            return self._queue.pop(0)

    def _room_after(self, batch: list[tuple[str, ReducedColumn]]) -> bool:
        """Whether another column may join the batch."""
        if batch[0][0] in self._asked:
            return False
        held = sum(reduced.counts.distinct for _, reduced in batch)
        return held < FORMS_BATCH_VALUES

    def _reduce(self, name: str) -> ReducedColumn:
        if self._reduced_of is not None:
            return self._reduced_of(name)
        x = self._values_of(name)
        return reduce_for_scan(x, self._y, self._settings, self._adjust, name)

    def _keep(self, name: str, reduced: ReducedColumn, scan: ColumnScan) -> ColumnScan:
        """The first pass keeps each column's counts and result for the second."""
        with self._lock:
            self._reduced[name] = reduced
            self._first_results[name] = scan
        return scan

    def _order(self, scored: list[ColumnScan]) -> None:
        """Second-pass queue: columns asked for first, then most non-linear first (the
        first pass's ranking)."""
        with self._lock:
            jumped = [c for c in self._jumped if c in self._first_results]
            rest = [s.column for s in rank(scored) if s.column not in jumped]
            self._queue = jumped + rest
            self._ordered = True

    def _next(self) -> str | None:
        with self._lock:
            return self._queue.pop(0) if self._queue else None

    def _second(self, name: str) -> ColumnScan:
        reduced = self._reduced.pop(name)
        first = self._first_results[name]
        if not _needs_forms(reduced, first):
            return first
        return _scan_reduced(name, reduced, self._settings)[0]


def _needs_forms(reduced: ReducedColumn, first: ColumnScan) -> bool:
    """A column the first pass could not fit at all (constant, binary, one outcome class)
    has nothing for the second pass to add."""
    counts = reduced.counts
    return not (
        counts.distinct_values <= 2
        or counts.total_events == 0
        or counts.total_events == counts.rows
    )


def _shut(executor: ProcessPoolExecutor, finished: bool) -> None:
    """Stop the workers. A finished scan waits for them (nothing is left, so at once): an
    executor shut without waiting can race the interpreter's exit (concurrent.futures'
    exit hook wakes a pipe its thread has closed; seen here on CPython 3.11 as an
    "Exception ignored ... Bad file descriptor" traceback after a finished scan). A scan
    closed early (the user quit) does not wait for the columns still being fitted."""
    executor.shutdown(wait=finished, cancel_futures=True)


def _ready() -> None:
    """Worker task that does nothing: submitted to start the workers early."""


def _start(executor: ProcessPoolExecutor, workers: int) -> None:
    try:
        for _ in range(workers):
            executor.submit(_ready)
    except RuntimeError:  # the scan was closed first: nothing to start
        pass


def _first(name: str, reduced: ReducedColumn, settings: ScanSettings) -> ColumnScan:
    return _scan_reduced(name, reduced, settings, forms=False)[0]


def _first_given(
    name: str, reduced: ReducedColumn, settings: ScanSettings
) -> list[tuple[ColumnScan, None]]:
    """Worker task: first pass on counts reduced by the parent."""
    with one_blas_thread():
        return [(_first(name, reduced, settings), None)]


def _forms_given_many(
    batch: list[tuple[str, ReducedColumn]], settings: ScanSettings
) -> list[ColumnScan]:
    """Worker task: second pass (every form) on counts kept by the parent, a few columns."""
    with one_blas_thread():
        return [_scan_reduced(name, reduced, settings)[0] for name, reduced in batch]


_INHERITED: (
    tuple[ValuesOf, np.ndarray, ScanSettings, Adjustment | None, ManyValuesOf | None] | None
) = None


def _inherit(
    values_of: ValuesOf,
    y: np.ndarray,
    settings: ScanSettings,
    adjust: Adjustment | None,
    many_of: ManyValuesOf | None = None,
) -> None:
    """Worker start (fork): keep the reader, outcome, settings and covariates handed over."""
    global _INHERITED
    _quiet_worker()
    _INHERITED = (values_of, y, settings, adjust, many_of)


def _first_named(names: list[str]) -> list[tuple[ColumnScan, ReducedColumn]]:
    """Worker task (fork): read, reduce and score a batch of columns; the counts go back
    to the parent for the second pass."""
    assert _INHERITED is not None, "worker started without the parent's reader"
    values_of, y, settings, adjust, many_of = _INHERITED
    if many_of is not None and len(names) > 1:
        columns = many_of(names)
    else:
        columns = [values_of(name) for name in names]
    out = []
    with one_blas_thread():
        for i, name in enumerate(names):
            reduced = reduce_for_scan(columns[i], y, settings, adjust, name)
            columns[i] = None  # type: ignore[call-overload]  # a column's rows go once reduced
            out.append((_first(name, reduced, settings), reduced))
    return out

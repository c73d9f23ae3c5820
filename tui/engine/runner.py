"""Scan many columns on all cores, yielding each result as it finishes.

Each column is read once and reduced to counts (``reduce_for_scan``), then every candidate
is fitted on the counts. Worker processes do this for one column at a time each. The fits
are many small numpy calls that hold the interpreter lock, so threads barely overlap
them and processes are the default (benchmarks/results/scan_speed.md). Results are the
same numbers as a sequential scan: the same code runs on the same counts.
"""

from __future__ import annotations

import multiprocessing
import os
import signal
import threading
from collections.abc import Callable, Iterable, Iterator
from concurrent.futures import (
    FIRST_COMPLETED,
    Executor,
    Future,
    ProcessPoolExecutor,
    ThreadPoolExecutor,
    wait,
)
from typing import Literal

import numpy as np

from tui.engine.adjust import Adjustment
from tui.engine.adjusted_scan import scan_adjusted
from tui.engine.fitting import one_blas_thread
from tui.engine.scan import ColumnScan, ReducedColumn, ScanSettings, reduce_for_scan, scan_reduced

ValuesOf = Callable[[str], np.ndarray]
"""Returns a column's values (float, NaN for missing) aligned with the outcome."""

PoolKind = Literal["process", "thread"]

AHEAD_PER_WORKER = 2
"""Columns reduced and waiting per worker: enough to keep workers busy, few enough that
a cancelled scan stops soon."""


def default_workers() -> int:
    """The cores this process may run on."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not every platform can say which cores are ours
        return max(1, os.cpu_count() or 1)


def scan_columns(
    columns: Iterable[str],
    values_of: ValuesOf,
    y: np.ndarray,
    settings: ScanSettings = ScanSettings(),
    *,
    workers: int | None = None,
    pool: PoolKind = "process",
    adjust: Adjustment | None = None,
) -> Iterator[ColumnScan]:
    """Scan columns, yielding each result as soon as it is ready (not yet ranked).

    ``workers`` defaults to every core this process may use; 1 scans in this process, in
    the order given. With more, results arrive in the order they finish. Closing the
    iterator early cancels the columns not yet started.

    ``pool`` chooses worker processes (the default: the fits hold the interpreter lock, so
    threads barely overlap them) or threads. Where columns are read: worker threads, and
    worker processes started by fork (when this process runs a single thread, as the
    command line does), call ``values_of`` themselves, so columns are read and reduced in
    parallel, each worker holding one column at a time. When other threads are running
    (the review app scans from a worker thread), forking is unsafe: processes then come
    from a fork server, ``values_of`` is called from the calling thread only, one column
    at a time, and the workers receive the reduced counts.

    ``adjust`` adds fixed covariates and/or row weights to every fit of every column.
    """
    names = list(columns)
    count = default_workers() if workers is None else max(1, int(workers))
    count = min(count, len(names))
    if adjust is not None and adjust.covariates is not None:
        # Adjusted columns share one covariate block and fit on rows (adjusted_scan).
        yield from scan_adjusted(names, values_of, y, adjust, settings, workers=count)
        return
    if count <= 1:
        with one_blas_thread():
            for name in names:
                reduced = reduce_for_scan(values_of(name), y, settings, adjust, name)
                yield _score(name, reduced, settings)
        return
    if pool == "thread":
        executor: Executor = ThreadPoolExecutor(count, thread_name_prefix="bendwise-scan")
        with one_blas_thread():  # process-wide, so set here for every thread at once
            futures = (
                executor.submit(_read_and_score, name, values_of, y, settings, adjust)
                for name in names
            )
            yield from _collect(futures, executor, count)
        return
    if pool != "process":
        raise ValueError(f"pool must be 'process' or 'thread', not {pool!r}")
    context = _start_method()
    if context.get_start_method() == "fork":
        # Forked workers share this process's memory as it is now: hand them the reader.
        executor = ProcessPoolExecutor(
            count, context, initializer=_inherit, initargs=(values_of, y, settings, adjust)
        )
        futures = (executor.submit(_scan_named, name) for name in names)
        yield from _collect(futures, executor, count)
        return
    executor = ProcessPoolExecutor(count, context, initializer=_quiet_worker)
    submitted = _submit_reduced(executor, names, values_of, y, settings, adjust, _score_in_worker)
    yield from _collect(submitted, executor, count)


def _score(name: str, reduced: ReducedColumn, settings: ScanSettings) -> ColumnScan:
    """Only the small scan result travels back from a worker, not the table."""
    return scan_reduced(name, reduced, settings)[0]


def _read_and_score(
    name: str,
    values_of: ValuesOf,
    y: np.ndarray,
    settings: ScanSettings,
    adjust: Adjustment | None = None,
) -> ColumnScan:
    """Read, reduce and score one column (sorting releases the interpreter lock, so
    threads overlap reading and reducing one column with fitting another)."""
    return _score(name, reduce_for_scan(values_of(name), y, settings, adjust, name), settings)


def _score_in_worker(name: str, reduced: ReducedColumn, settings: ScanSettings) -> ColumnScan:
    """Worker task: score counts reduced by the parent."""
    with one_blas_thread():
        return _score(name, reduced, settings)


_INHERITED: tuple[ValuesOf, np.ndarray, ScanSettings, Adjustment | None] | None = None


def _inherit(
    values_of: ValuesOf, y: np.ndarray, settings: ScanSettings, adjust: Adjustment | None
) -> None:
    """Worker start (fork): keep the reader, outcome, settings and covariates handed over."""
    global _INHERITED
    _quiet_worker()
    _INHERITED = (values_of, y, settings, adjust)


def _scan_named(name: str) -> ColumnScan:
    """Worker task (fork): read, reduce and score one column."""
    assert _INHERITED is not None, "worker started without the parent's reader"
    with one_blas_thread():
        return _read_and_score(name, *_INHERITED)


def _submit_reduced(
    executor: Executor,
    names: list[str],
    values_of: ValuesOf,
    y: np.ndarray,
    settings: ScanSettings,
    adjust: Adjustment | None,
    task: Callable[[str, ReducedColumn, ScanSettings], ColumnScan],
) -> Iterator[Future[ColumnScan]]:
    """Read and reduce here, one column at a time; the workers fit."""
    for name in names:
        reduced = reduce_for_scan(values_of(name), y, settings, adjust, name)
        yield executor.submit(task, name, reduced, settings)


def _collect(
    futures: Iterator[Future[ColumnScan]], executor: Executor, workers: int
) -> Iterator[ColumnScan]:
    """Results in the order they finish, keeping a few columns queued per worker."""
    pending: set[Future[ColumnScan]] = set()
    limit = AHEAD_PER_WORKER * workers
    try:
        for future in futures:
            pending.add(future)
            # Hand back whatever is ready; block only when enough work is queued.
            timeout = 0 if len(pending) < limit else None
            done, pending = wait(pending, timeout=timeout, return_when=FIRST_COMPLETED)
            for finished in done:
                yield finished.result()
        while pending:
            done, pending = wait(pending, return_when=FIRST_COMPLETED)
            for finished in done:
                yield finished.result()
    finally:
        # Normal end, an error, or the consumer closing us early: drop queued columns and
        # do not wait for running ones (each takes a fraction of a second).
        executor.shutdown(wait=not pending, cancel_futures=True)


def _start_method() -> multiprocessing.context.BaseContext:
    """Fork when this process runs a single thread (fast: nothing is imported again);
    otherwise a fork server, since forking while other threads run (the review app scans
    from a worker thread) can copy a lock that one of them holds."""
    methods = multiprocessing.get_all_start_methods()
    if "fork" in methods and threading.active_count() == 1:
        return multiprocessing.get_context("fork")
    if "forkserver" in methods:
        context = multiprocessing.get_context("forkserver")
        context.set_forkserver_preload(["tui.engine.scan"])
        return context
    return multiprocessing.get_context("spawn")


def _quiet_worker() -> None:
    """Ctrl-C is the parent's to handle; workers would each print a traceback."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)

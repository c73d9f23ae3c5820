"""The first scan as a stream of steps: the engine's two passes, or one pass of a scanner.

The app's scan worker reads ``ScanStep``s (``tui.engine.two_pass``): a ``score`` step per
column, then a ``forms`` step per column. A one-pass scanner (adjusted columns, which share
one covariate block in one pass, or a scanner a test hands in) gives ``score`` steps whose
results already hold their forms. ``ScanTally`` keeps the latest result of every column
and lists them in evidence order; ranking every column costs tens of milliseconds at a
few thousand columns, so it ranks once, when the first pass ends, and every later result
takes the q-value its score got then.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Iterable, Iterator
from typing import Protocol

import numpy as np

from tui.engine.adjust import Adjustment
from tui.engine.scan import ColumnScan, ScanSettings, evidence_order, rank, with_q_value
from tui.engine.two_pass import ScanStep

POST_EVERY_SECONDS = 0.1
"""Progress messages are posted at most this often (and at the end of each pass)."""
POST_EACH_BELOW = 50
"""The first results are each posted at once: a small table fills in column by column."""


class Scanner(Protocol):
    """The engine's one-pass column scanner (``scan_columns``; tests pass one that runs
    in-process)."""

    def __call__(
        self,
        columns: Iterable[str],
        values_of: Callable[[str], np.ndarray],
        y: np.ndarray,
        settings: ScanSettings,
        *,
        adjust: Adjustment | None = None,
    ) -> Iterator[ColumnScan]: ...


class StepStream(Protocol):
    """What the scan worker iterates: ``TwoPassScan`` or ``OnePass``."""

    def __iter__(self) -> Iterator[ScanStep]: ...

    def prioritise(self, column: str) -> bool: ...


class TwoPasser(Protocol):
    """Builds a two-pass scan (``TwoPassScan``; tests pass one on a single process)."""

    def __call__(
        self,
        columns: Iterable[str],
        values_of: Callable[[str], np.ndarray],
        y: np.ndarray,
        settings: ScanSettings,
        *,
        adjust: Adjustment | None = None,
    ) -> StepStream: ...


class OnePass:
    """A one-pass scanner's results as ``score`` steps (each already with its forms)."""

    def __init__(self, results: Iterator[ColumnScan], total: int) -> None:
        self._results, self._total = results, total

    def __iter__(self) -> Iterator[ScanStep]:
        try:
            for done, scan in enumerate(self._results, start=1):
                yield ScanStep("score", scan, done, self._total)
        finally:
            close = getattr(self._results, "close", None)
            if close is not None:
                close()  # stops the engine's workers at once when the scan is dropped

    def prioritise(self, column: str) -> bool:
        """One pass fits every form of a column at once: there is no queue to jump."""
        return False


class ScanTally:
    """The latest result of every column of a scan, in evidence order."""

    def __init__(self) -> None:
        self._results: dict[str, ColumnScan] = {}
        self._q: dict[str, float] | None = None  # every score's q-value, once all are in
        self._order: list[str] = []
        self._posted = 0.0

    def add(self, step: ScanStep) -> None:
        """Keep the step's result; at the end of the first pass, rank every score."""
        scan = step.scan
        if self._q is not None and scan.column in self._q:
            scan = with_q_value(scan, self._q[scan.column])
        self._results[scan.column] = scan
        if step.stage == "score" and step.done == step.total:
            self.finish()

    def finish(self) -> None:
        """Rank every score (once): q-values and the order are final from now on."""
        if self._q is not None:
            return
        ranked = rank(self._results.values())
        self._results = {s.column: s for s in ranked}
        self._order = [s.column for s in ranked]
        self._q = {s.column: s.q_value for s in ranked if s.q_value is not None}

    @property
    def scored(self) -> bool:
        """Every column's score is in: q-values are known, the order is final."""
        return self._q is not None

    @property
    def forms_complete(self) -> bool:
        """Every result so far holds its best form."""
        return all(s.forms_fitted for s in self._results.values())

    def ranked(self) -> list[ColumnScan]:
        """Every result so far, most non-linear first (q-values once ``scored``)."""
        if self._q is None:
            return sorted(self._results.values(), key=evidence_order)
        return [self._results[c] for c in self._order]

    def due(self, step: ScanStep) -> bool:
        """Whether to post progress now: each of the first results, then at most every
        ``POST_EVERY_SECONDS``, and always at the end of a pass."""
        now = time.monotonic()
        if (
            step.done < POST_EACH_BELOW
            or step.done == step.total
            or now - self._posted >= POST_EVERY_SECONDS
        ):
            self._posted = now
            return True
        return False

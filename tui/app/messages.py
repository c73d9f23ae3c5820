"""The messages the review app's workers and screens post (Textual: attributes down,
messages up). Worker threads post them; the app or the screen handles each with ``@on``."""

from __future__ import annotations

from textual.message import Message

from tui.app.basis import Basis
from tui.app.fit_cache import ColumnFits, FitRequest
from tui.engine.scan import ColumnScan
from tui.engine.stability import SelectionShares


class ScanProgress(Message):
    """The first scan has scored one more column."""

    def __init__(self, ranked: list[ColumnScan], done: int, total: int, run: int) -> None:
        super().__init__()
        self.ranked, self.done, self.total, self.run = ranked, done, total, run


class ScoresDone(Message):
    """The first pass of the first scan is over: every column's score and q-value are in;
    the best forms follow (``FormsProgress``)."""

    def __init__(self, ranked: list[ColumnScan], total: int, run: int) -> None:
        super().__init__()
        self.ranked, self.total, self.run = ranked, total, run


class FormsProgress(Message):
    """The second pass of the first scan has fitted the forms of more columns."""

    def __init__(self, ranked: list[ColumnScan], done: int, total: int, run: int) -> None:
        super().__init__()
        self.ranked, self.done, self.total, self.run = ranked, done, total, run


class ScanDone(Message):
    """The first scan has scored every column (and fitted every column's forms)."""

    def __init__(self, ranked: list[ColumnScan], total: int, run: int) -> None:
        super().__init__()
        self.ranked, self.total, self.run = ranked, total, run


class ColumnOpened(Message):
    """A column screen shows this column: its forms are fitted next if still queued."""

    def __init__(self, column: str) -> None:
        super().__init__()
        self.column = column


class RescoreStarted(Message):
    """A working-model re-score has built its covariates."""

    def __init__(self, basis: Basis, run: int) -> None:
        super().__init__()
        self.basis, self.run = basis, run


class ColumnRescored(Message):
    """One undecided column re-scored in the working model."""

    def __init__(self, result: ColumnScan, basis: Basis, run: int) -> None:
        super().__init__()
        self.result, self.basis, self.run = result, basis, run


class RescoreDone(Message):
    """Every undecided column is re-scored in the working model."""

    def __init__(self, basis: Basis, run: int) -> None:
        super().__init__()
        self.basis, self.run = basis, run


class ScoresChanged(Message):
    """The scores shown changed (a re-score, or back to the first scan's): sent to each
    open column screen, which refits when its column's design changed."""

    bubble = False


class FitsReady(Message):
    """A column's candidate fits are in (posted by the column screen's fit worker)."""

    bubble = False

    def __init__(self, fits: ColumnFits) -> None:
        super().__init__()
        self.fits = fits


class LogChanged(Message):
    """The recoding log changed from elsewhere (an undo): sent to each open screen, which
    redraws what it shows of the log."""

    bubble = False


class SharesReady(Message):
    """A column's bootstrap selection shares are in (posted by the column screen's worker)."""

    bubble = False

    def __init__(self, request: FitRequest, shares: SelectionShares | None) -> None:
        super().__init__()
        self.request, self.shares = request, shares

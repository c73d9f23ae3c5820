"""The column screen's line saying which figures come from the scan's bins and which are
exact, with the column's score refitted on every distinct value (shown once it is in).

Hidden for a column whose counts are exact (every column below 10,000 rows, and any with
at most 1,000 distinct values, weights or covariates): then every figure is exact.
"""

from __future__ import annotations

from textual import on
from textual.message import Message

from tui.app.fit_cache import ColumnFits, FitCache
from tui.app.text import number_text
from tui.app.widgets.line import Line
from tui.engine.scan import ColumnScan, ScanSettings


class ExactScoreIn(Message):
    """The exact score of a binned column is computed (None: too many values)."""

    bubble = False

    def __init__(self, column: str, scan: ColumnScan | None) -> None:
        super().__init__()
        self.column, self.scan = column, scan


def binned_words(fits: ColumnFits) -> str:
    """What the binned figures are: the plot, the table and the list's score."""
    counts = fits.counts
    about = "about " if counts.values_estimated else ""
    return (
        f"≈ plot, forms and list score on {counts.distinct:,} bins"
        f" · {about}{counts.distinct_values:,} distinct values"
    )


class ExactnessLine(Line):
    """Binned or exact: shown only when the column's counts are binned."""

    DEFAULT_CSS = "ExactnessLine { height: 1; padding: 0 1; display: none; }"

    _column: str | None = None

    def show(
        self,
        fits: ColumnFits | None,
        cache: FitCache,
        settings: ScanSettings,
        listed: ColumnScan | None,
    ) -> None:
        """Describe ``fits`` (None: nothing yet); for binned counts, refit the score on
        every distinct value off the UI thread. ``listed``: the list's result."""
        if fits is None or fits.counts.exact:
            self._column = None
            self.display = False
            return
        column = fits.request.column
        self.display = True
        if self._column == column:
            return  # the exact score is in or on its way
        self._column = column
        self.update(f"{binned_words(fits)} · exact score: fitting…")
        self._listed = number_text(listed.score) if listed is not None else "-"
        self._words = binned_words(fits)

        def refit() -> None:
            self.post_message(ExactScoreIn(column, cache.exact_score(column, settings)))

        self.run_worker(refit, thread=True, exclusive=True, group="exact", exit_on_error=False)

    @on(ExactScoreIn)
    def _arrived(self, message: ExactScoreIn) -> None:
        if message.column != self._column:
            return
        scan = message.scan
        if scan is None or scan.score is None:
            exact = "exact score: too many values to refit here"
        else:
            exact = f"exact on every value: score {number_text(scan.score)} (list {self._listed})"
        self.update(f"{self._words} · {exact}")

"""The first screen: every numeric column, most non-linear first, filling in as the scan runs."""

from __future__ import annotations

import time
from collections.abc import Sequence
from dataclasses import dataclass

from textual import events, on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.screen import Screen
from textual.timer import Timer
from textual.widgets import DataTable, Input, ProgressBar

from tui.app.fit_cache import FitCache
from tui.app.messages import LogChanged
from tui.app.notices import tell
from tui.app.screens.decisions import DecisionsScreen
from tui.app.screens.inspect import InspectScreen
from tui.app.session import ReviewSession
from tui.app.text import number_text
from tui.app.view_state import ReviewView
from tui.app.widgets.key_footer import KeyFooter
from tui.app.widgets.line import Line
from tui.app.widgets.steady import lay_out_now
from tui.app.widgets.triage_table import PENDING, TriageTable
from tui.engine.scan import ColumnScan
from tui.engine.score_words import statistics_word
from tui.recodings.decisions import UNDECIDED
from tui.table_rules import best_words

SORTS = ("evidence", "name", "ΔAIC", "file order")
"""Orders of the list, in the order the sort key steps through them."""
REFRESH_SECONDS = 0.2
"""While the scan runs, the list is redrawn at most this often."""
REDRAW_SHARE = 0.25
"""...and at most this share of the time: a list of thousands of columns takes a while to
redraw, and keys must still answer while the second pass fills it in."""
HOLD_SECONDS = 2.0
"""While keys are typed, the timed redraw waits for a pause in them, at most this long."""


def arrange(
    scans: Sequence[ColumnScan],
    sort: str,
    file_order: Sequence[str],
    text: str,
    hide: set[str],
) -> list[ColumnScan]:
    """The rows to show: ``scans`` (in evidence order) filtered by name and re-sorted."""
    rows = [s for s in scans if text.lower() in s.column.lower() and s.column not in hide]
    if sort == "name":
        rows.sort(key=lambda s: s.column.lower())
    elif sort == "ΔAIC":
        rows.sort(key=lambda s: (s.delta_aic is None, s.delta_aic or 0.0))
    elif sort == "file order":
        position = {name: i for i, name in enumerate(file_order)}
        rows.sort(key=lambda s: position.get(s.column, len(position)))
    return rows


@dataclass(frozen=True)
class Known:
    """What the list shows besides its order and filter, as read from the session."""

    words: dict[str, str]
    """Each column's decision word."""
    decided: set[str]
    """Columns with a decision."""
    adjusted: bool
    """Some score is adjusted."""
    decided_words: tuple[str, str]
    """The summary's decision counts: in full, and those not zero."""
    scores: str
    """Which statistic the scores are."""
    hint: str
    """The working-model keys, when they would do something."""


class TriageScreen(Screen[None]):
    """The list of columns with their evidence and decisions."""

    CSS_PATH = "triage.tcss"
    BINDINGS = [
        # Hidden here because the table's own Enter binding shows "Open" in the footer.
        Binding(
            "enter", "open_column", "Open", tooltip="Inspect the highlighted column", show=False
        ),
        Binding("s", "cycle_sort", "Sort", tooltip="Sort by evidence, name, ΔAIC, file order"),
        Binding("slash", "filter", "Filter", tooltip="Show columns whose name holds a text"),
        Binding("d", "toggle_decided", "Hide decided", tooltip="Hide or show decided columns"),
        Binding("L", "decisions", "Log", tooltip="Open the recoding log"),
        # Named on the summary line above the list instead (the footer is full at 80).
        Binding(
            "m",
            "app.working_model",
            "Working model",
            tooltip="Re-score the undecided columns in the working model",
            show=False,
        ),
        Binding(
            "u",
            "app.first_scores",
            "First scores",
            tooltip="Back to the first scan's scores",
            show=False,
        ),
        Binding("q", "app.quit", "Quit", tooltip="Quit (every decision is already saved)"),
        Binding("exclamation_mark", "app.cautions", "Cautions", tooltip="Read the cautions"),
        Binding(
            "escape", "clear_filter", "Clear filter", tooltip="Drop the name filter", show=False
        ),
    ]

    def __init__(self, session: ReviewSession, cache: FitCache) -> None:
        super().__init__()
        self.session, self.cache = session, cache
        self.view: ReviewView = session.view  # this screen writes the list's order
        self.sort = SORTS[0]
        self.hide_decided = False
        self._filter = ""
        self._redraw_timer: Timer | None = None
        self._redraw_due = 0.0  # when the timed redraw was meant to run
        self._scan_text = "starting the scan…"
        self._rescoring = False  # a working-model re-score is under way
        self._follow_top = True  # while the scan runs, until a key moves the cursor
        self._opening_filter = False
        self._redraw_cost = 0.0  # seconds the last redraw took
        self._decided_words = ("", "")  # the summary's counts: in full, and non-zero only
        self._summary_tail: list[str] = []
        self._known: tuple[tuple, Known] | None = None  # and what it was read from
        self._column_screen: InspectScreen | None = None  # made once, shown for each column

    def compose(self) -> ComposeResult:
        s = self.session
        outcome = s.dataset.outcome
        yield Line(
            f"bendwise review · {s.data_name} · outcome {outcome.column} "
            f"(event {outcome.event})" + (" · READ-ONLY" if s.book.read_only else ""),
            id="title",
        )
        with Horizontal(id="progress"):
            yield ProgressBar(
                total=len(s.columns), show_eta=False, show_percentage=False, id="scan-bar"
            )
            yield Line(self._scan_text, id="scanned")
        yield Line("", id="summary")
        yield Line(f"! {s.source_warning}" if s.source_warning else "", id="warning")
        yield Input(placeholder="type part of a column name; Enter: done, Esc: clear", id="filter")
        yield TriageTable(id="columns")
        yield Line("", id="detail")
        yield KeyFooter(compact=True)

    def on_mount(self) -> None:
        self.query_one("#warning").display = bool(self.session.source_warning)
        self.query_one("#filter").display = False
        self.query_one(TriageTable).focus()
        self.redraw()
        self.call_after_refresh(self._show_summary)  # the line's width is known from now

    def on_screen_resume(self) -> None:
        self.redraw()

    @on(LogChanged)
    def log_changed(self) -> None:
        """The log changed from another screen (an undo)."""
        self.redraw()

    # --- the scan reports here (from the app) ---------------------------------------------

    def scan_progress(
        self,
        done: int,
        total: int,
        finished: bool,
        problem: str | None,
        model: bool = False,
        forms: int | None = None,
    ) -> None:
        """New scan results are in the session: update the bar now, the list soon.
        ``model``: the scan re-scores undecided columns in the working model; ``forms``:
        the first pass is over and this many columns have their best form (the bar
        follows the second pass)."""
        bar = self.query_one("#scan-bar", ProgressBar)
        bar.update(total=total, progress=done if forms is None else forms)
        skipped = [p.name for p in self.session.dataset.skipped]
        covariates = len(self.session.model or ())
        self._rescoring = model and not finished and problem is None
        if model and problem is not None:
            self._scan_text = f"re-score stopped after {done}/{total} columns: {problem}"
        elif model and finished:
            size = f"{covariates} column" + ("" if covariates == 1 else "s")
            self._scan_text = f"{total} undecided re-scored in the working model ({size})"
        elif model:
            self._scan_text = f"{done}/{total} undecided re-scored in the working model"
        elif problem is not None:
            self._scan_text = f"scan stopped after {done}/{total} columns: {problem}"
        elif finished:
            scored = sum(1 for r in self.session.ranked if r.score is not None)
            self._scan_text = f"{done}/{total} columns scanned, {scored} scored"
            zero = self.session.zero_weight_rows()
            if zero:
                self._scan_text += f"; {zero} rows weigh 0 (left out)"
            if skipped:
                self._scan_text += f"; not numeric: {', '.join(skipped)}"
        elif forms is not None:
            self._scan_text = f"{total} scored · best forms {forms}/{total} (ΔAIC fills in)"
        else:
            self._scan_text = f"{done}/{total} columns scanned (q-values at the end)"
        self.query_one("#scanned", Line).update(self._scan_text)
        self.query_one("#scan-bar").display = not finished and problem is None
        if finished or problem is not None:
            if self._redraw_timer is not None:
                self._redraw_timer.stop()
                self._redraw_timer = None
            self.redraw()
            self._follow_top = False
        elif forms == 0:
            self.redraw()  # the first pass is over: q-values and the final order now
        elif self._redraw_timer is None:
            wait = max(REFRESH_SECONDS, self._redraw_cost / REDRAW_SHARE)
            self._redraw_due = time.monotonic() + wait
            self._redraw_timer = self.set_timer(wait, self._timed_redraw)

    def _timed_redraw(self) -> None:
        # A redraw of thousands of rows would make the key just typed wait: while keys
        # come, the list waits for a pause (at most HOLD_SECONDS past its time).
        typing = getattr(self.app, "keys", None)
        late = time.monotonic() - self._redraw_due
        if typing is not None and typing.typing() and late < HOLD_SECONDS:
            self._redraw_timer = self.set_timer(REFRESH_SECONDS, self._timed_redraw)
            return
        self._redraw_timer = None
        self.redraw()

    # --- drawing --------------------------------------------------------------------------

    def _known_now(self) -> Known:
        """What the list shows besides its order, read again only when the log, the
        results or the model changed (a re-sort or a filter changes none of them, and
        reading them took a third of a re-sort's time at 2,000 columns). The log and the
        list of results are replaced, never changed in place, on every change."""
        s = self.session
        source = (s.book.log, s.ranked, s.scan_finished, s.model)
        kept = self._known
        if kept is not None and all(a is b for a, b in zip(kept[0], source, strict=True)):
            return kept[1]
        words = s.decision_words()
        counts = s.counts()
        decided = f"{counts.decided} of {len(s.columns)} decided"
        short = counts.short_words()
        known = Known(
            words,
            {c for c, word in words.items() if word != UNDECIDED},
            any(r.adjusted_for for r in s.ranked),
            (f"{decided}: {counts.words()}", f"{decided}: {short}" if short else decided),
            # Which statistic the scores are (engine words): weights score by robust Wald.
            f"scores {statistics_word(r.statistic for r in s.ranked)}",
            self._model_hint(),
        )
        self._known = (source, known)
        return known

    def redraw(self) -> None:
        """Rebuild the list from the session."""
        started = time.perf_counter()
        s = self.session
        known = self._known_now()
        hide = known.decided if self.hide_decided else set()
        rows = arrange(s.ranked, self.sort, s.columns, self._filter, hide)
        self.view.order = [r.column for r in rows]
        table = self.query_one(TriageTable)
        table.hold_widths = self._rescoring
        table.show(rows, known.words, s.scan_finished, known.adjusted)
        self.set_class(table.adjusted_shown, "-adjusted")
        if self._follow_top:
            table.move_to_key(None)
        self._decided_words = known.decided_words
        parts = [known.scores, f"sorted by {self.sort}"]
        if self._filter:
            parts.append(f"names containing '{self._filter}'")
        if self.hide_decided:
            parts.append("decided hidden")
        if len(rows) < len(s.ranked):
            parts.append(f"showing {len(rows)}")
        if known.hint:
            parts.append(known.hint)
        if s.weight:
            parts.append(f"weights {s.weight}")  # the kind is on the column screen
        self._summary_tail = parts
        self._show_summary()
        self._describe_highlighted()
        self._redraw_cost = time.perf_counter() - started

    def _show_summary(self) -> None:
        """The summary line. Wider than the screen (80 columns), the decision counts shrink
        to those that are not zero, so the sort, the filter and the key hints stay in view."""
        line = self.query_one("#summary", Line)
        full, short = self._decided_words
        text = " · ".join([full, *self._summary_tail])
        room = line.content_size.width
        if 0 < room < len(text):
            text = " · ".join([short, *self._summary_tail])
        line.update(text)

    def on_resize(self, event: events.Resize) -> None:
        self.call_after_refresh(self._show_summary)

    def _model_hint(self) -> str:
        """The working-model keys, named when they would do something."""
        s = self.session
        if not s.scan_finished:
            return ""
        model = s.working_model()
        stale = any(s.adjusted_for(c) != tuple(x for x in model if x != c) for c in s.undecided())
        if model and stale and len(model) > len(s.adjust):
            return "m: working model" if s.model is None else "m: re-score · u: first scores"
        return "u: first scores" if s.model is not None else ""

    def _describe_highlighted(self) -> None:
        column = self.query_one(TriageTable).highlighted_key()
        scan = self.session.scan_of(column) if column else None
        detail = self.query_one("#detail", Line)
        if scan is None:
            empty = "no column matches" if self.session.ranked else "waiting for the first column…"
            detail.update(empty)
            return
        best = best_words(scan.best_form, scan.delta_aic) if scan.forms_fitted else PENDING
        basis = ""
        if self.query_one(TriageTable).adjusted_shown:
            named = ", ".join(scan.adjusted_for)
            basis = f"score adjusted for {named} · " if named else "score unadjusted · "
        # n, missing, distinct and flags first: the list may have no room for them.
        detail.update(
            f"{scan.column}: n {scan.n} · missing {scan.missing} · distinct {scan.distinct} · "
            f"flags {', '.join(scan.flags) or 'none'} · {basis}best {best} (ΔAIC "
            f"{number_text(scan.delta_aic)}) · {self.session.decision_phrase(scan.column)}"
        )

    def on_key(self, event: events.Key) -> None:
        # Any key (a move, a sort, a filter) ends following the top: from then on the
        # cursor stays on its column however the list is re-ranked or re-sorted.
        self._follow_top = False
        # Keys typed quickly after the slash arrive before its binding runs and before
        # focus reaches the box: open the box here and keep what is typed.
        box = self.query_one("#filter", Input)
        if event.key == "slash" and not box.display:
            self.action_filter()
            event.stop()
        elif self._opening_filter and event.is_printable and event.character:
            box.insert_text_at_cursor(event.character)
            event.stop()
        elif self._opening_filter and event.key == "enter":
            # Enter typed for the filter must never open a column (and so never lets the
            # letters after it reach the column screen, where letters decide).
            event.stop()
            self._opening_filter = False
            self.on_input_submitted(Input.Submitted(box, box.value))

    def on_descendant_focus(self, event: events.DescendantFocus) -> None:
        if event.widget is self.query_one("#filter", Input):
            self._opening_filter = False

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        self._describe_highlighted()

    def on_data_table_row_selected(self, event: DataTable.RowSelected) -> None:
        event.stop()
        self.action_open_column()

    # --- actions --------------------------------------------------------------------------

    def action_open_column(self) -> None:
        """Inspect the highlighted column."""
        column = self.query_one(TriageTable).highlighted_key()
        if column is not None:
            self.app.push_screen(self._inspect(column), self._back)

    def _inspect(self, column: str) -> InspectScreen:
        """The column screen showing ``column``. It is made once and kept (installed)
        between columns: making its widgets and laying them out anew took about a third
        of the time to open a column."""
        screen = self._column_screen
        if screen is None:
            screen = self._column_screen = InspectScreen(self.session, self.cache, column)
            self.app.install_screen(screen, name=f"column-{id(screen)}")
        else:
            screen.reopen(column)
        return screen

    def _back(self, column: str | None) -> None:
        # The list is redrawn as the screen resumes (on_screen_resume): only the cursor.
        self._follow_top = False
        self.query_one(TriageTable).move_to_key(column)

    def action_cycle_sort(self) -> None:
        """Step to the next order of the list."""
        self.sort = SORTS[(SORTS.index(self.sort) + 1) % len(SORTS)]
        self.redraw()
        tell(self, f"sorted by {self.sort}", timeout=1)  # the summary line says it too

    def action_toggle_decided(self) -> None:
        """Hide or show the columns that already have a decision."""
        self.hide_decided = not self.hide_decided
        self.redraw()

    def action_filter(self) -> None:
        """Type part of a name to narrow the list."""
        box = self.query_one("#filter", Input)
        if not box.has_focus:
            self._opening_filter = True  # until the box has the focus (see on_key)
        box.display = True
        box.focus()

    def action_clear_filter(self) -> None:
        """Drop the name filter."""
        box = self.query_one("#filter", Input)
        with box.prevent(Input.Changed):  # the list is redrawn here, once
            box.value = ""
        box.display = False
        self._filter = ""
        # Focus moved now, not after the key (``focus()`` waits): the footer's keys
        # change with the box, and all of it is laid out in the key's frame.
        self.set_focus(self.query_one(TriageTable))
        self.redraw()
        self.query_one(KeyFooter).follow_now()
        lay_out_now(self)  # the hidden box's room goes to the list in the key's frame

    def on_input_changed(self, event: Input.Changed) -> None:
        text = event.value.strip()
        if text != self._filter:  # clearing the box empties it: one redraw, not two
            self._filter = text
            self.redraw()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        if not event.value.strip():
            self.action_clear_filter()
        else:
            self.query_one(TriageTable).focus()

    def action_decisions(self) -> None:
        """Open the recoding log."""
        self.app.push_screen(DecisionsScreen(self.session), self._open_from_log)

    def _open_from_log(self, column: str | None) -> None:
        if column is not None:
            self.app.push_screen(self._inspect(column), self._back)

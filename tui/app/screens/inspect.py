"""The second screen: one column's picture, its candidate forms, and the decision keys."""

from __future__ import annotations

import os
import threading
from collections.abc import Callable

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.screen import Screen
from textual.widgets import DataTable
from textual.worker import Worker, WorkerState, get_current_worker

from tui.app.fit_cache import ColumnFits, FitCache, FitRequest
from tui.app.messages import ColumnOpened, FitsReady, LogChanged, ScoresChanged
from tui.app.notices import not_saved, tell
from tui.app.screens import missing_hooks
from tui.app.screens.column_lines import (
    CUT_TIP,
    GROUPS_TIP,
    HINGE_TIP,
    KNOTS_TIP,
    RECODED_TIP,
    SHORT_BELOW,
    TABLE_TIP,
    counts_line,
    heading_line,
    legend_line,
    score_line,
    settings_line,
)
from tui.app.screens.decisions import DecisionsScreen
from tui.app.screens.hand_forms import SIDE_TIP, HandFormsHook
from tui.app.screens.note_prompt import NotePrompt
from tui.app.screens.recorded_view import RecordedView
from tui.app.screens.share_line import SharesHook, share_line
from tui.app.session import LogNotSaved, ReviewSession
from tui.app.text import path_text
from tui.app.view_state import ReviewView
from tui.app.widgets.exactness_line import ExactnessLine
from tui.app.widgets.forms_table import FormsTable, form_text, power_words, row_notes
from tui.app.widgets.key_footer import KeyFooter
from tui.app.widgets.line import Line
from tui.app.widgets.logit_plot import LogitPlot
from tui.app.widgets.missing_panel import MissingPanel
from tui.app.widgets.steady import NoScrollSize, lay_out_now
from tui.cautions import CAUTIONS
from tui.engine.compare import FormFit
from tui.engine.forms.base import Recoding
from tui.engine.stability import SelectionShares
from tui.recodings.model import Decision

CUT_CAUTION = CAUTIONS[1]
"""Shown whenever the highlighted form is an indicator or bands (dichotomising)."""
FORMS_FIRST_AT_MOST = 0.5
"""Seconds the shares wait for the forms to be drawn first (never longer)."""
MISSING_TIP = "Code a missing x for the accepted form: leave, fill, or fill + indicator"


class Picture(NoScrollSize, Horizontal):
    """The plot and the missing panel side by side (never scrolls)."""


class InspectScreen(SharesHook, HandFormsHook, Screen[str]):
    """One column under inspection; dismisses with the column last shown."""

    CSS_PATH = "inspect.tcss"
    BINDINGS = [
        Binding("escape", "back", "Back", tooltip="Back to the column list"),
        Binding("a", "accept", "Accept", tooltip="Accept the highlighted form"),
        Binding("l", "keep_linear", "Linear", tooltip="Keep the column linear"),
        Binding("x", "set_aside", "Set aside", tooltip="Set the column aside (not used)"),
        Binding("n", "note", "Note", tooltip="Add or edit the note on the column"),
        Binding("left_square_bracket", "step(-1)", "Prev", tooltip="Previous column"),
        Binding("right_square_bracket", "step(1)", "Next", tooltip="Next column"),
        # Shown on the settings line above the footer instead (the footer is full at 80).
        Binding("g", "cycle_groups", "Groups", tooltip=GROUPS_TIP, show=False),
        Binding("s", "cycle_knots", "Knots", tooltip=KNOTS_TIP, show=False),
        Binding("c", "enter_cut", "Cut", tooltip=CUT_TIP, show=False),
        Binding("h", "enter_hinge", "Hinge", tooltip=HINGE_TIP, show=False),
        Binding("b", "flip_side", "Side", tooltip=SIDE_TIP, show=False),
        Binding("L", "decisions", "Log", tooltip="Open the recoding log", show=False),
        Binding("f", "code_missing", "Missing", tooltip=MISSING_TIP, show=False),
        Binding("v", "recoded_view", "Recoded view", tooltip=RECODED_TIP, show=False),
        Binding("t", "toggle_table", "Table", tooltip=TABLE_TIP, show=False),
    ]

    def __init__(self, session: ReviewSession, cache: FitCache, column: str) -> None:
        super().__init__()
        self.session, self.cache, self.column = session, cache, column
        self.view: ReviewView = session.view  # the list's order, typed numbers, drafts
        self.fits: ColumnFits | None = None
        self.shares: SelectionShares | None = None
        self._want_key: str | None = None
        self._forms_drawn = threading.Event()  # set once a fit worker's forms are drawn
        self.recoded = False
        """The plot shows the recoded view (groups against the form's linear predictor)."""

    def compose(self) -> ComposeResult:
        yield Line("", id="heading")
        yield Line("", id="evidence")
        yield Line("", id="counts")
        yield ExactnessLine(id="exactness")
        yield Line("", id="adjusted")
        with Picture(id="picture"):
            yield LogitPlot(id="plot")
            yield MissingPanel(id="missing")
        yield Line("", id="legend")
        yield FormsTable(id="forms")
        yield Line("", id="shares")
        yield Line("", id="notes")
        yield Line("", id="caution")
        yield Line("", id="note")
        yield Line("", id="settings")
        yield KeyFooter(compact=True)

    def on_mount(self) -> None:
        self.query_one(FormsTable).focus()
        self.show_column(self.column)

    # --- what is shown --------------------------------------------------------------------

    @property
    def groups(self) -> int:
        """Quantile groups set for this column (remembered per column while the app runs)."""
        return self.view.settings_of(self.column, self.session.start_settings(self.column))[0]

    @property
    def knots(self) -> int:
        """Spline knots set for this column."""
        return self.view.settings_of(self.column, self.session.start_settings(self.column))[1]

    def request(self) -> FitRequest:
        """The fits wanted now."""
        return FitRequest(
            self.column,
            self.groups,
            self.knots,
            self.view.hand_cuts.get(self.column, ()),
            self.view.hand_hinges.get(self.column, ()),
            self.session.basis_of(self.column),
            self.view.side(self.column),
        )

    @on(ScoresChanged)
    def scores_changed(self) -> None:
        """The session's scores changed (a working-model re-score, or back to the first
        scan): when this column's score now comes from another design, refit with it."""
        self._refresh_heading()
        if self.fits is not None and self.fits.request != self.request():
            self._load(self.query_one(FormsTable).highlighted_key())

    def reopen(self, column: str) -> None:
        """Show ``column`` as a newly opened screen would (this screen is kept between
        columns): the curves, the table in its usual room, the first form."""
        self.recoded = False
        self.remove_class("-plot-first")
        self.show_column(column)
        self.query_one(FormsTable).focus()

    def show_column(self, column: str) -> None:
        """Switch to ``column``: fits from the cache, or computed in a worker."""
        self.column = column
        self.fits = None
        self._want_key = None  # a new column starts on its first form
        self.query_one(FormsTable).show_rows([])
        self.query_one(ExactnessLine).show(None, self.cache, self.session.settings, None)
        self.post_message(ColumnOpened(column))  # its forms jump the scan's queue
        self._refresh_heading()
        self._load()
        lay_out_now(self)

    def _load(self, focus_key: str | None = None) -> None:
        """Show the fits of the current request; ``focus_key`` is the row to highlight
        once they are in (kept until then, however many requests come in between)."""
        if focus_key is not None:
            self._want_key = focus_key
        request = self.request()
        cached = self.cache.cached(request)
        if cached is not None:
            self._show_fits(cached)
            return
        if self.fits is None:  # a new column: nothing of the old one may stay on screen
            self.query_one(LogitPlot).draw(None, None)
            self.query_one(MissingPanel).show_group(None, ())
            self.query_one("#legend", Line).update("")
            self.query_one("#caution", Line).update("")
        self.query_one("#notes", Line).update(f"fitting the candidate forms of {self.column}…")
        self.compute(request)

    @work(thread=True, exclusive=True, group="fits", exit_on_error=False)
    def compute(self, request: FitRequest) -> None:
        """Fit every candidate off the UI thread; the cache keeps the result."""
        fits = self.cache.fits(request)
        drawn = self._forms_drawn = threading.Event()
        if not get_current_worker().is_cancelled:
            self.post_message(FitsReady(fits))
            # The bootstrap holds the interpreter for seconds: it starts once the forms
            # are drawn (a frame), so that frame does not share the interpreter with it.
            drawn.wait(FORMS_FIRST_AT_MOST)
        self.compute_shares(request)

    @on(FitsReady)
    def _arrived(self, message: FitsReady) -> None:
        drawn = self._forms_drawn
        if message.fits.request == self.request():  # a stale result stays in the cache only
            self._show_fits(message.fits)
            self.call_after_refresh(drawn.set)
        else:
            drawn.set()

    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        if event.worker.group == "fits" and event.state == WorkerState.ERROR:
            error = event.worker.error
            self.query_one("#notes", Line).update(
                f"✗ the engine could not fit {self.column}: {type(error).__name__}: {error}"
            )

    def _show_fits(self, fits: ColumnFits) -> None:
        self.fits = fits
        done, self.shares = self.cache.cached_shares(fits.request)
        self.query_one("#shares", Line).update(share_line(fits, self.shares, pending=not done))
        if not done and not self.fit_worker_running():
            self.shares_worker(fits.request)
        table = self.query_one(FormsTable)
        table.show(fits, self._accepted(), self.shares)
        if self._want_key is not None:
            table.move_to_key(self._want_key)
            self._want_key = None
        self._refresh_heading()
        self._refresh_row()
        missing_hooks.show_panel(self, self.session, self.column, fits)
        s = self.session
        self.query_one(ExactnessLine).show(fits, self.cache, s.settings, s.scan_of(self.column))
        lay_out_now(self)  # the table's and the panel's new sizes in the next frame

    def _accepted(self) -> Recoding | None:
        decision = self.session.log.decision_for(self.column)
        return decision.recoding if decision is not None else None

    def highlighted(self) -> FormFit | None:
        """The candidate under the cursor."""
        if self.fits is None or self.fits.table is None:
            return None
        key = self.query_one(FormsTable).highlighted_key()
        return self.fits.table.row(key) if key is not None else None

    def note(self) -> str:
        """The column's note: the draft typed, else the one saved."""
        return self.view.note(self.column, self.session.saved_note(self.column))

    def _refresh_heading(self) -> None:
        s, column = self.session, self.column
        order = self.view.order if column in self.view.order else s.columns
        heading = heading_line(column, order, s.decision_phrase(column))
        self.query_one("#heading", Line).update(heading)
        scan = s.scan_of(column)
        tails = self.fits.tails if self.fits is not None else None
        self.query_one("#evidence", Line).update(score_line(scan, s.scan_finished, tails))
        self.query_one("#counts", Line).update(counts_line(s.profile_of(column), scan))
        basis = s.basis_of(column)
        adjusted = self.query_one("#adjusted", Line)
        adjusted.display = not basis.plain
        if not basis.plain:
            # Short terminals name the covariates only; taller ones say how each entered.
            short = self.has_class("-short")
            words = s.describe_basis(column, basis, forms=not short)
            if s.adjusted_for(column, basis) and not short:
                words += " · curves drawn at the covariates' means"
            adjusted.update(words)
        note = self.note()
        self.query_one("#note", Line).update(f"note: {note}" if note else "")
        self.query_one("#note").display = bool(note)
        self.query_one("#settings", Line).update(settings_line(self.groups, self.knots))

    def _refresh_row(self) -> None:
        """Redraw the candidate curve, the legend and the notes for the highlighted row."""
        fits = self.fits
        row = self.highlighted()
        plot = self.query_one(LogitPlot)
        plot.draw(fits, row, self.recoded)
        self.query_one("#legend", Line).update(legend_line(fits, row, plot.window(), self.recoded))
        notes = self.query_one("#notes", Line)
        caution = self.query_one("#caution", Line)
        caution.update("")
        caution.display = False
        if fits is not None and fits.problem is not None:
            notes.update(f"about this column: {fits.problem}")  # information, not an error
            return
        if row is None or fits is None:
            notes.update("")
            return
        words = row_notes(row, row.label in fits.request.hand_labels())
        bt = fits.table.box_tidwell if fits.table is not None else None
        if row.kind == "linear" and bt is not None:
            words.append(power_words(bt))
        notes.update(f"form notes ({form_text(row)}): " + ("; ".join(words) or "none"))
        if row.form.cut_based:
            caution.update(f"Caution: {CUT_CAUTION}")
            caution.display = True

    def action_recoded_view(self) -> None:
        """Switch between the curves and the recoded view of the highlighted form."""
        row = self.highlighted()
        if not self.recoded and (row is None or row.fit is None):
            tell(self, "highlight a fitted form first", severity="warning")
            return
        self.recoded = not self.recoded
        self._refresh_row()

    def action_toggle_table(self) -> None:
        """Give the plot the candidate table's room (the highlighted row stays), or back."""
        self.toggle_class("-plot-first")

    def on_resize(self) -> None:
        # Short terminals give the plot the room and let the table scroll.
        short = self.size.height < SHORT_BELOW
        if short != self.has_class("-short"):
            self.set_class(short, "-short")
            self._refresh_heading()

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        self._refresh_row()

    # --- decisions ------------------------------------------------------------------------

    def action_accept(self) -> None:
        """Accept the highlighted form for this column."""
        row = self.highlighted()
        if row is None:
            tell(self, "no form to accept yet", severity="warning")
            return
        if row.status != "ok" or row.recoding is None:
            text = f"not accepted: {form_text(row)} did not fit ({row.status})"
            tell(self, text, severity="warning")
            return
        fits = self.fits
        assert fits is not None  # a highlighted row comes from fits
        hand = row.label in fits.request.hand_labels()
        basis = fits.request.basis  # the design the row was fitted with
        column, groups, knots = self.column, self.groups, self.knots
        note = self.note()
        shares = self.shares
        self._decide(
            lambda: self.session.accept(column, row, groups, knots, hand, basis, note, shares)
        )

    def action_keep_linear(self) -> None:
        """Keep this column as a plain linear term."""
        fits = self.fits
        linear = fits.table.linear if fits and fits.table else None
        if fits is None or linear is None or linear.recoding is None:
            tell(self, "the linear form is not fitted yet", severity="warning")
            return
        basis = fits.request.basis
        column, groups, knots = self.column, self.groups, self.knots
        note = self.note()
        shares = self.shares
        self._decide(
            lambda: self.session.accept(column, linear, groups, knots, False, basis, note, shares)
        )

    def _decide(self, record: Callable[[], Decision]) -> None:
        try:
            decision: Decision = record()
        except LogNotSaved as problem:
            not_saved(self, problem)
            return
        self.view.drafts.pop(self.column, None)  # the note is in the log now
        self._after_change()
        x = self.session.preview_values(self.column)  # as replay reads it
        name = path_text(str(self.session.log_path), os.getcwd())
        rows = self.session.preview_from_rows
        self.app.push_screen(RecordedView(decision, x, name, rows))

    def action_set_aside(self) -> None:
        """Record that this column is not to be used."""
        if self.fits is None:  # nothing shown yet: a key typed on the way here, not a choice
            tell(self, "wait for the column's fits before setting it aside", severity="warning")
            return
        try:
            self.session.set_aside(self.column, self.note())
        except LogNotSaved as problem:
            not_saved(self, problem)
            return
        self.view.drafts.pop(self.column, None)
        self._after_change()
        tell(self, f"recorded: {self.column} set aside (saved), z undoes", timeout=4)

    def action_note(self) -> None:
        """Add or edit the note on this column."""
        saved = self.session.is_decided(self.column)
        prompt = NotePrompt(self.column, self.note(), saved)
        self.app.push_screen(prompt, self._noted)

    def _noted(self, note: str | None) -> None:
        if note is None:
            return
        try:
            saved = self.session.set_note(self.column, note)
        except LogNotSaved as problem:
            not_saved(self, problem)
            return
        if saved:
            self.view.drafts.pop(self.column, None)
        else:
            self.view.drafts[self.column] = note  # recorded with the decision
        text = "note saved" if saved else "note kept; it is saved with the decision"
        tell(self, text, timeout=3)
        self._refresh_heading()

    @on(LogChanged)
    def log_changed(self) -> None:
        """The log changed elsewhere (an undo): show the column's decision as it is now."""
        self._after_change()

    def _after_change(self) -> None:
        if self.fits is not None:
            self.query_one(FormsTable).show(self.fits, self._accepted(), self.shares)
        self._refresh_heading()

    # --- moving ---------------------------------------------------------------------------

    def action_step(self, step: int) -> None:
        """Show the previous or next column of the list."""
        column = self.view.neighbour(self.column, step)
        if column is None:
            tell(self, "no more columns that way", timeout=2)
            return
        self.show_column(column)

    def action_back(self) -> None:
        """Back to the list."""
        self.dismiss(self.column)

    def action_code_missing(self) -> None:
        """Choose how the accepted form codes a missing x (leave, fill, fill + indicator)."""
        missing_hooks.open_choice(self, self.session, self.column, self._after_change)

    def action_decisions(self) -> None:
        """Open the recoding log."""
        self.app.push_screen(DecisionsScreen(self.session), self._from_log)

    def _from_log(self, column: str | None) -> None:
        if column is not None:
            self.show_column(column)
        else:
            self._after_change()

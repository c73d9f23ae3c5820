"""The review app: the column list first; inspection, log, help and prompts on top.

The scan runs in a thread worker owned by the app, so it keeps going whichever screen is
shown; the worker posts a message per column (``tui.app.messages``) and the app's handlers
put the results in the session and tell the list screen. A re-score of the undecided
columns in the working model (every accepted column as a covariate) runs in the same way,
in the same worker group, so only one scan runs at a time. Screens start and stop scans
through the app's actions (``app.working_model``, ``app.first_scores``).
"""

from __future__ import annotations

import gc
from multiprocessing import resource_tracker

from textual import events, on, work
from textual.app import App
from textual.binding import Binding
from textual.worker import Worker, WorkerState, get_current_worker

from tui.app.commands import ReviewCommands
from tui.app.fit_cache import FitCache
from tui.app.key_gate import KeyGate
from tui.app.messages import (
    ColumnOpened,
    ColumnRescored,
    FormsProgress,
    LogChanged,
    RescoreDone,
    RescoreStarted,
    ScanDone,
    ScanProgress,
    ScoresChanged,
    ScoresDone,
)
from tui.app.notices import not_saved, tell
from tui.app.scan_stream import OnePass, Scanner, ScanTally, StepStream, TwoPasser
from tui.app.screens.cautions_view import CautionsView
from tui.app.screens.confirm_prompt import ConfirmPrompt
from tui.app.screens.decisions import DecisionsScreen
from tui.app.screens.help_view import HelpView, Section
from tui.app.screens.inspect import InspectScreen
from tui.app.screens.recorded_view import RecordedView
from tui.app.screens.triage import TriageScreen
from tui.app.screens.value_prompt import ValuePrompt
from tui.app.session import LogNotSaved, ReviewSession
from tui.engine.reduced_data import ReducedData
from tui.engine.runner import scan_columns
from tui.engine.scan import ColumnScan, rank
from tui.engine.two_pass import TwoPassScan
from tui.problems import InputProblem

FIRST, MODEL = "first", "model"
"""The two kinds of scan: every column at the start; the undecided ones in the working model."""


TABLE_KEYS = [
    Binding("up,k", "cursor_up", "Move up"),
    Binding("down,j", "cursor_down", "Move down"),
    Binding("pageup,pagedown", "page", "Page up / down"),
    Binding("home,end", "ends", "First / last row"),
]
"""Moving in any table (listed on the help screen)."""


def first_here(*args: object, **kwargs: object) -> TwoPassScan:
    """The engine's two passes with the first in the scan's thread: the first rows are
    listed without waiting for worker processes to start (they start meanwhile and fit
    the forms)."""
    return TwoPassScan(*args, first_here=True, **kwargs)  # type: ignore[arg-type]


class ReviewApp(App[None]):
    """``bendwise review``."""

    TITLE = "bendwise review"
    COMMANDS = {ReviewCommands}
    BINDINGS = [
        Binding("q", "quit", "Quit", tooltip="Quit (every decision is already saved)", show=False),
        Binding("question_mark,f1", "help", "Help", tooltip="List every key"),
        Binding(
            "z",
            "undo",
            "Undo",
            tooltip="Undo the last decision (again: the one before)",
            show=False,
        ),
        Binding(
            "exclamation_mark", "cautions", "Cautions", tooltip="Read the cautions", show=False
        ),
    ]

    def __init__(
        self,
        session: ReviewSession,
        scanner: Scanner = scan_columns,
        two_pass: TwoPasser | None = None,
    ) -> None:
        """``scanner`` re-scores in the working model and scans adjusted columns (one
        pass); ``two_pass`` runs the first scan of unadjusted columns, scores first and
        forms second (default: the engine's ``TwoPassScan``, first pass in the scan
        thread, with the engine's scanner; a
        scanner given alone, as in tests, runs the first scan in one pass too)."""
        # The engine scans on worker processes. Python starts a helper process for them on
        # first use, handing it stderr's file descriptor; once the app runs, sys.stderr is
        # Textual's stand-in, which has none, and the start fails. So start it now.
        resource_tracker.ensure_running()
        super().__init__()
        self.session = session
        self.scanner = scanner
        self.two_pass = first_here if two_pass is None and scanner is scan_columns else two_pass
        self._stream: StepStream | None = None  # the first scan's, while it runs
        self.cache = FitCache(session.dataset, session.settings.max_levels, session.adjustment)
        self.triage = TriageScreen(session, self.cache)
        self.scan_kind = FIRST
        """Which scan runs (or ran last)."""
        self._run = 0  # messages of an older (stopped) scan are ignored
        self._open = False  # a scan started and its last message is not handled yet
        self._model_done = self._model_total = 0
        self.keys = KeyGate()
        """Keys first: the first scan stands aside while a key is answered."""

    async def on_event(self, event: events.Event) -> None:
        if isinstance(event, events.Key):
            self.keys.pressed()
            # Two refreshes on: the app forwards the key, the focused widget handles it.
            self.call_after_refresh(self.call_after_refresh, self.keys.answered)
        await super().on_event(event)

    def on_mount(self) -> None:
        self.push_screen(self.triage)
        if self.session.access_notice:
            tell(self, self.session.access_notice, severity="warning", timeout=8)
        if self.session.source_warning:
            # Short: a long toast covers the list. The full text stays on the warning line.
            tell(self, "log written for other data: see the ! line", severity="warning", timeout=6)
        self._start(FIRST)
        self.scan(self._run)

    def _start(self, kind: str) -> None:
        """A new scan of ``kind``: messages of any earlier one are ignored from now on."""
        self.scan_kind = kind
        self._run += 1
        self._open = True

    def scanning(self) -> bool:
        """A scan (first or working-model) is under way, or its last message is on its way."""
        return self._open or any(
            w.group == "scan" and w.state in (WorkerState.PENDING, WorkerState.RUNNING)
            for w in self.workers
        )

    # --- the first scan ------------------------------------------------------------------

    @work(thread=True, exclusive=True, group="scan", exit_on_error=False)
    def scan(self, run: int) -> None:
        """Scan every column: the list fills in with scores first (q-values when the first
        pass ends), then the best forms column by column."""
        worker = get_current_worker()
        stream = self._first_stream()
        self._stream = stream
        tally = ScanTally()
        try:
            for step in stream:
                if worker.is_cancelled:
                    return
                self.keys.stand_aside(lambda: worker.is_cancelled)
                tally.add(step)
                if step.stage == "score" and tally.scored and not tally.forms_complete:
                    self.post_message(ScoresDone(tally.ranked(), step.total, run))
                elif tally.due(step):
                    kind = ScanProgress if step.stage == "score" else FormsProgress
                    self.post_message(kind(tally.ranked(), step.done, step.total, run))
        finally:
            self._stream = None
            close = getattr(stream, "close", None)
            if close is not None:
                close()
        tally.finish()
        self.post_message(ScanDone(tally.ranked(), len(self.session.columns), run))

    def _first_stream(self) -> StepStream:
        """Two passes for unadjusted columns; adjusted ones share one covariate block in
        one pass (as ``bendwise scan`` does)."""
        s = self.session
        adjust = s.adjustment(s.base)
        data = s.dataset
        if isinstance(data, ReducedData):  # counts from the engine: the two passes score them
            return TwoPassScan(
                s.columns, None, None, s.settings, reduced_of=data.reduced.get, first_here=True
            )
        args = (s.columns, data.raw_values, data.outcome.y, s.settings)
        if self.two_pass is not None and (adjust is None or adjust.covariates is None):
            return self.two_pass(*args, adjust=adjust)
        return OnePass(iter(self.scanner(*args, adjust=adjust)), len(s.columns))

    @on(ColumnOpened)
    def _opened(self, message: ColumnOpened) -> None:
        stream = self._stream
        if stream is not None and self.scan_kind == FIRST:
            stream.prioritise(message.column)

    @on(ScanProgress)
    def _scanned(self, message: ScanProgress) -> None:
        if message.run == self._run:
            self._first_results(message.ranked, False)
            self.triage.scan_progress(message.done, message.total, False, None)

    @on(ScoresDone)
    def _scores_done(self, message: ScoresDone) -> None:
        if message.run == self._run:
            self._first_results(message.ranked, True)
            self.triage.scan_progress(message.total, message.total, False, None, forms=0)

    @on(FormsProgress)
    def _forms_fitted(self, message: FormsProgress) -> None:
        if message.run == self._run:
            self._first_results(message.ranked, True)
            self.triage.scan_progress(message.total, message.total, False, None, forms=message.done)
            self._scores_changed()  # an open column's best form and shape may be in

    @on(ScanDone)
    def _scan_done(self, message: ScanDone) -> None:
        if message.run == self._run:
            self._open = False
            self._first_results(message.ranked, True)
            self.triage.scan_progress(len(message.ranked), message.total, True, None)
            # The results and the list's rows stay for the whole review: leaving them out
            # of the collector's full passes spares keys its pauses (tens of ms at 2,000).
            gc.freeze()

    def _first_results(self, ranked: list[ColumnScan], scored: bool) -> None:
        """``scored``: every column's score is in (q-values final; forms may follow)."""
        self.session.ranked = ranked
        self.session.first_ranked = ranked
        self.session.scan_finished = scored

    # --- re-scores in the working model ---------------------------------------------------

    def action_working_model(self) -> None:
        """Re-score the undecided columns in the working model."""
        why_not = self.score_in_working_model()
        if why_not is not None:
            tell(self, why_not, severity="warning")
            return
        model = self.session.working_model()
        size = f"{len(model)} column" + ("" if len(model) == 1 else "s")
        tell(self, f"re-scoring in the working model ({size})", timeout=4)

    def score_in_working_model(self) -> str | None:
        """Start re-scoring the undecided columns in the working model; returns why it
        cannot start (None when it started)."""
        s = self.session
        if self.scanning():
            return "a scan is running: wait for it to end"
        columns = s.undecided()
        if not columns:
            return "every column is decided: nothing to re-score"
        if not s.working_model():
            return "the working model is empty: accept a form (a) or keep a column linear (l)"
        self._start(MODEL)
        self._model_done, self._model_total = 0, len(columns)
        s.scan_finished = False
        self.triage.scan_progress(0, len(columns), False, None, model=True)
        self.model_scan(columns, self._run)
        return None

    @work(thread=True, exclusive=True, group="scan", exit_on_error=False)
    def model_scan(self, columns: list[str], run: int) -> None:
        """Re-score ``columns`` with every covariate of the working model in every fit."""
        worker = get_current_worker()
        s = self.session
        basis = s.model_basis()  # reads covariates from the data: off the UI thread
        self.post_message(RescoreStarted(basis, run))
        data = s.dataset
        results = self.scanner(
            columns, data.raw_values, data.outcome.y, s.settings, adjust=s.adjustment(basis)
        )
        try:
            for result in results:
                if worker.is_cancelled:
                    return
                self.post_message(ColumnRescored(result, basis, run))
        finally:
            close = getattr(results, "close", None)
            if close is not None:
                close()  # stops the engine's workers at once when the re-score is dropped
        self.post_message(RescoreDone(basis, run))

    @on(RescoreStarted)
    def _model_started(self, message: RescoreStarted) -> None:
        if message.run == self._run:
            self.session.model = message.basis.covariates

    @on(ColumnRescored)
    def _rescored(self, message: ColumnRescored) -> None:
        if message.run == self._run:  # not a result on its way when the re-score stopped
            self.session.rescored(message.result, message.basis)
            self._model_done += 1
            self._model_results(False)

    @on(RescoreDone)
    def _rescore_done(self, message: RescoreDone) -> None:
        if message.run == self._run:
            self._open = False
            self._model_results(True)

    def _model_results(self, finished: bool) -> None:
        s = self.session
        s.ranked = rank(s.ranked)
        s.scan_finished = finished
        self.triage.scan_progress(self._model_done, self._model_total, finished, None, model=True)
        self._scores_changed()

    def action_first_scores(self) -> None:
        """Back to the first scan's scores."""
        why_not = self.first_scores()
        if why_not is not None:
            tell(self, why_not, severity="warning")
            return
        tell(self, "first scan's scores shown", timeout=3)

    def first_scores(self) -> str | None:
        """Return to the first scan's scores (stopping a working-model re-score); returns
        why not (None when done)."""
        s = self.session
        if self.scan_kind == FIRST and self.scanning():
            return "the first scan is still running"
        if s.model is None and not s.scored_with and not self.scanning():
            return "the first scan's scores are already shown"
        self.workers.cancel_group(self, "scan")
        self._start(FIRST)  # results of the stopped re-score still on their way are ignored
        self._open = False
        s.first_scores()
        s.scan_finished = True
        total = len(s.columns)
        self.triage.scan_progress(len(s.ranked), total, True, None)
        self._scores_changed()
        return None

    def _scores_changed(self) -> None:
        """Inspection screens follow the basis of the score they show."""
        for screen in self.screen_stack:
            if isinstance(screen, InspectScreen):
                screen.post_message(ScoresChanged())

    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        if event.worker.group == "scan" and event.state == WorkerState.ERROR:
            error = event.worker.error
            problem = f"{type(error).__name__}: {error}"
            if isinstance(error, InputProblem):
                problem = str(error)  # the intake's one-line message says it all
            self._open = False
            if self.scan_kind == MODEL:
                # Columns re-scored so far keep their new scores (each row says which).
                self.session.scan_finished = True
                done, total = self._model_done, self._model_total
                self.triage.scan_progress(done, total, False, problem, model=True)
                tell(self, f"re-score stopped: {problem}", severity="error", timeout=10)
                return
            done = len(self.session.ranked)
            total = len(self.session.columns)
            self.triage.scan_progress(done, total, False, problem)

    # --- undo ---------------------------------------------------------------------------

    def action_undo(self) -> None:
        """Take back the last change to the log (each press walks one further back)."""
        try:
            undone = self.session.undo()
        except LogNotSaved as problem:
            not_saved(self, problem)
            return
        if undone is None:
            tell(self, "nothing to undo in this review", timeout=3)
            return
        if isinstance(self.screen, RecordedView):
            self.pop_screen()  # it showed the decision just taken back
        for screen in self.screen_stack:
            screen.post_message(LogChanged())
        tell(self, f"undone: {undone} (log saved)", timeout=4)

    def help_sections(self) -> list[Section]:
        """What the help screen lists, screen by screen."""
        return [
            ("Everywhere", [*self.BINDINGS, Binding("ctrl+p", "palette", "Find any action")]),
            ("Moving in a table", TABLE_KEYS),
            ("Column list", TriageScreen.BINDINGS),
            ("Column (plot and candidate forms)", InspectScreen.BINDINGS),
            ("Recoding log", DecisionsScreen.BINDINGS),
            (
                "Prompts",
                [
                    Binding("enter", "submit", "Use the number or note typed"),
                    *ValuePrompt.BINDINGS,  # the note prompt takes the same keys
                    *ConfirmPrompt.BINDINGS,
                ],
            ),
        ]

    def action_help(self) -> None:
        """List every key."""
        if not isinstance(self.screen, HelpView):
            self.push_screen(HelpView(self.help_sections()))

    def action_cautions(self) -> None:
        """Read the cautions."""
        if not isinstance(self.screen, CautionsView):
            self.push_screen(CautionsView())

"""The review app: the column list first; inspection, log, help and prompts on top.

The scan runs in a thread worker owned by the app, so it keeps going whichever screen is
shown; results reach the list screen through ``call_from_thread``.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator
from multiprocessing import resource_tracker

import numpy as np
from textual import work
from textual.app import App
from textual.binding import Binding
from textual.worker import Worker, WorkerState, get_current_worker

from tui.app.commands import ReviewCommands
from tui.app.fit_cache import FitCache
from tui.app.notices import tell
from tui.app.screens.cautions_view import CautionsView
from tui.app.screens.confirm_prompt import ConfirmPrompt
from tui.app.screens.decisions import DecisionsScreen
from tui.app.screens.help_view import HelpView, Section
from tui.app.screens.inspect import InspectScreen
from tui.app.screens.triage import TriageScreen
from tui.app.screens.value_prompt import ValuePrompt
from tui.app.session import ReviewSession
from tui.engine.runner import scan_columns
from tui.engine.scan import ColumnScan, ScanSettings, rank

Scanner = Callable[
    [Iterable[str], Callable[[str], np.ndarray], np.ndarray, ScanSettings], Iterator[ColumnScan]
]
"""The engine's column scanner (``scan_columns`` or its parallel twin)."""

TABLE_KEYS = [
    Binding("up,k", "cursor_up", "Move up"),
    Binding("down,j", "cursor_down", "Move down"),
    Binding("pageup,pagedown", "page", "Page up / down"),
    Binding("home,end", "ends", "First / last row"),
]
"""Moving in any table (listed on the help screen)."""


class ReviewApp(App[None]):
    """``bendwise review``."""

    TITLE = "bendwise review"
    COMMANDS = {ReviewCommands}
    BINDINGS = [
        Binding("q", "quit", "Quit", tooltip="Quit (every decision is already saved)", show=False),
        Binding("question_mark,f1", "help", "Help", tooltip="List every key"),
        Binding(
            "exclamation_mark", "cautions", "Cautions", tooltip="Read the cautions", show=False
        ),
    ]

    def __init__(self, session: ReviewSession, scanner: Scanner = scan_columns) -> None:
        # The engine scans on worker processes. Python starts a helper process for them on
        # first use, handing it stderr's file descriptor; once the app runs, sys.stderr is
        # Textual's stand-in, which has none, and the start fails. So start it now.
        resource_tracker.ensure_running()
        super().__init__()
        self.session = session
        self.scanner = scanner
        self.cache = FitCache(session.dataset, session.settings.max_levels)
        self.triage = TriageScreen(session, self.cache)

    def on_mount(self) -> None:
        self.push_screen(self.triage)
        if self.session.source_warning:
            tell(self, self.session.source_warning, severity="warning", timeout=15)
        self.scan()

    @work(thread=True, exclusive=True, group="scan", exit_on_error=False)
    def scan(self) -> None:
        """Scan every column; the list fills in as each one finishes."""
        worker = get_current_worker()
        s = self.session
        found: list[ColumnScan] = []
        total = len(s.columns)
        results = self.scanner(s.columns, s.dataset.raw_values, s.dataset.outcome.y, s.settings)
        for result in results:
            if worker.is_cancelled:
                return
            found.append(result)
            self.call_from_thread(self._scanned, rank(found), len(found), total, False)
        self.call_from_thread(self._scanned, rank(found), len(found), total, True)

    def _scanned(self, ranked: list[ColumnScan], done: int, total: int, finished: bool) -> None:
        self.session.ranked = ranked
        self.session.scan_finished = finished
        self.triage.scan_progress(done, total, finished, None)

    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        if event.worker.group == "scan" and event.state == WorkerState.ERROR:
            error = event.worker.error
            done = len(self.session.ranked)
            total = len(self.session.columns)
            self.triage.scan_progress(done, total, False, f"{type(error).__name__}: {error}")

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

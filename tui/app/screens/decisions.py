"""The third screen: what the recoding log on disk holds, with a key to remove an entry."""

from __future__ import annotations

import os

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import DataTable

from tui.app.messages import LogChanged
from tui.app.notices import not_saved, tell
from tui.app.screens.confirm_prompt import ConfirmPrompt
from tui.app.session import SET_ASIDE, LogNotSaved, ReviewSession
from tui.app.text import path_text
from tui.app.widgets.key_footer import KeyFooter
from tui.app.widgets.key_table import ColumnSpec, KeyTable, Row
from tui.app.widgets.line import Line
from tui.recodings.decisions import decided_counts


def log_rows(session: ReviewSession) -> list[Row]:
    """One row per recording and per set-aside column, in the log's order."""
    rows: list[Row] = []
    here = set(session.columns)
    for d in session.log.decisions:
        word = session.decision_word(d.column) if d.column in here else d.recoding.describe()
        rows.append(
            (
                d.column,
                {
                    "column": d.column if d.column in here else f"{d.column} (not in data)",
                    "decision": word,
                    "outputs": ", ".join(d.outputs),
                    "when": d.decided_at.replace("T", " ")[:16],
                    "note": d.note or "-",
                },
            )
        )
    for entry in session.log.set_aside:
        rows.append(
            (
                entry.column,
                {
                    "column": entry.column,
                    "decision": SET_ASIDE,
                    "outputs": "-",
                    "when": entry.decided_at.replace("T", " ")[:16],
                    "note": entry.note or "-",
                },
            )
        )
    return rows


class LogTable(KeyTable):
    """The log's entries; Enter opens the highlighted column."""

    BINDINGS = [Binding("enter", "select_cursor", "Open")]

    SPECS = (
        ColumnSpec("column", "column", 18, 30, False, 0),
        ColumnSpec("decision", "decision", 18, 26, False, 1),
        ColumnSpec("note", "note", 16, 60, False, 2),
        ColumnSpec("outputs", "new columns", 16, 60, False, 3),
        ColumnSpec("when", "decided (UTC)", 16, 16, False, 4),
    )


class DecisionsScreen(Screen[str | None]):
    """Lists the log; dismisses with a column to open, or None."""

    CSS_PATH = "decisions.tcss"
    BINDINGS = [
        Binding("escape", "back", "Back", tooltip="Back to the previous screen"),
        Binding(
            "enter", "open_column", "Open", tooltip="Inspect the highlighted column", show=False
        ),
        Binding("r,delete", "remove", "Remove", tooltip="Remove the highlighted entry"),
    ]

    def __init__(self, session: ReviewSession) -> None:
        super().__init__()
        self.session = session

    def compose(self) -> ComposeResult:
        yield Line("Recoding log", id="title")
        yield Line("", id="file")
        yield Line("", id="warning")
        yield LogTable(id="entries")
        yield Line("", id="detail")
        yield KeyFooter(compact=True)

    def on_mount(self) -> None:
        self.query_one(LogTable).focus()
        self.redraw()

    @on(LogChanged)
    def log_changed(self) -> None:
        """The log changed (an undo)."""
        self.redraw()

    def redraw(self) -> None:
        """Show the log as it is on disk now."""
        s = self.session
        path = path_text(str(s.log_path), os.getcwd())
        log = s.log
        count = decided_counts(log).words()
        state = "saved" if s.log_path.exists() else "not written yet (nothing decided)"
        self.query_one("#file", Line).update(f"{path} · {count} · {state}")
        warning = self.query_one("#warning", Line)
        warning.update(f"! {s.source_warning}" if s.source_warning else "")
        warning.display = bool(s.source_warning)
        self.query_one(LogTable).show_rows(log_rows(s))
        self._describe()

    def _describe(self) -> None:
        column = self.query_one(LogTable).highlighted_key()
        detail = self.query_one("#detail", Line)
        if column is None:
            detail.update("The log is empty. Decisions made on the column screen appear here.")
            return
        decision = self.session.log.decision_for(column)
        if decision is None:
            aside = next(e for e in self.session.log.set_aside if e.column == column)
            by = f" · by {aside.decided_by}" if aside.decided_by else ""
            detail.update(
                f"{column}: set aside{by} · note: {self.session.saved_note(column) or '-'}"
            )
            return
        ev = decision.evidence
        facts = [f"{column}: {decision.recoding.describe()}"]
        if ev.score.statistic is not None:
            facts.append(f"score {ev.score.statistic:.1f} ({ev.score.test})")
        if ev.row.delta_aic is not None:
            facts.append(f"ΔAIC {ev.row.delta_aic:.1f}")
        if ev.row.df is not None:
            facts.append(f"{ev.row.df} df")
        if ev.adjusted_for:
            facts.append("judged adjusted for " + ", ".join(ev.adjusted_for))
        if ev.weights.column:
            facts.append(f"{ev.weights.kind or ''} weights {ev.weights.column}".strip())
        facts.append(f"range {decision.range[0]:.6g} to {decision.range[1]:.6g}")
        if decision.decided_by:
            facts.append(f"by {decision.decided_by}")
        if ev.version:
            facts.append(f"bendwise {ev.version}")
        facts.append(f"note: {decision.note or '-'}")
        detail.update(" · ".join(facts))

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        self._describe()

    def on_data_table_row_selected(self, event: DataTable.RowSelected) -> None:
        event.stop()
        self.action_open_column()

    def action_open_column(self) -> None:
        """Inspect the highlighted column."""
        column = self.query_one(LogTable).highlighted_key()
        if column is not None and column in self.session.columns:
            self.dismiss(column)
        elif column is not None:
            tell(
                self,
                f"{column} is not a numeric column of this data",
                severity="warning",
            )

    def action_remove(self) -> None:
        """Remove the highlighted entry from the log (asks first)."""
        column = self.query_one(LogTable).highlighted_key()
        if column is None:
            return
        question = f"Remove the decision on {column} from the log?"
        self.app.push_screen(ConfirmPrompt(question), lambda yes: self._remove(column, yes))

    def _remove(self, column: str, yes: bool | None) -> None:
        if not yes:
            return
        try:
            note = self.session.remove(column)
        except LogNotSaved as problem:
            not_saved(self, problem)
            return
        if note:
            self.session.view.drafts[column] = note  # the reason is kept for the next decision
        tell(self, f"{column} removed from the log (saved)", timeout=3)
        self.redraw()

    def action_back(self) -> None:
        """Back to the previous screen."""
        self.dismiss(None)

"""A prompt for the analyst's note on a column (the reason for the decision)."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Input

from tui.app.widgets.line import Line

NOTE_LENGTH = 500
"""Longest note accepted; a reason, not a report."""


class NotePrompt(ModalScreen[str | None]):
    """Edits a note; dismisses with the new text (empty removes it), or None on Escape."""

    CSS_PATH = "note_prompt.tcss"
    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def __init__(self, column: str, note: str, saved_with_decision: bool) -> None:
        super().__init__()
        self._column, self._note, self._saved = column, note, saved_with_decision

    def compose(self) -> ComposeResult:
        when = (
            "Saved to the log at once."
            if self._saved
            else "Kept with the column and saved with its decision."
        )
        with Vertical(id="box"):
            yield Line(f"Note on {self._column}", id="title")
            yield Line(f"Why this form? {when}", id="explain")
            yield Input(value=self._note, max_length=NOTE_LENGTH, placeholder="your reason")
            yield Line("Enter: keep   Esc: cancel   (empty removes the note)", id="keys")

    def on_input_submitted(self, event: Input.Submitted) -> None:
        self.dismiss(event.value.strip())

    def action_cancel(self) -> None:
        self.dismiss(None)

"""A yes/no question before something is removed from the log."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen

from tui.app.widgets.line import Line


class ConfirmPrompt(ModalScreen[bool]):
    """Dismisses with True for y, False for n or Escape."""

    CSS_PATH = "confirm_prompt.tcss"
    BINDINGS = [
        Binding("y", "answer(True)", "Yes", tooltip="Yes (remove it)"),
        Binding("n,escape,q", "answer(False)", "No", tooltip="No (keep it)"),
    ]

    def __init__(self, question: str) -> None:
        super().__init__()
        self._question = question

    def compose(self) -> ComposeResult:
        with Vertical(id="box"):
            yield Line(self._question, id="question")
            yield Line("y: yes   n, q or Esc: no", id="keys")

    def action_answer(self, yes: bool) -> None:
        self.dismiss(yes)

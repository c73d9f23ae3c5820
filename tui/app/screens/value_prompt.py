"""A prompt for one number inside the column's range (a cut point or a knot)."""

from __future__ import annotations

import math

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Input

from tui.app.text import value_text
from tui.app.widgets.line import Line


def parse_value(text: str, low: float, high: float) -> float:
    """The number typed, strictly between ``low`` and ``high``; ValueError says what is wrong."""
    typed = text.strip()
    if not typed:
        raise ValueError("type a number")
    try:
        value = float(typed)
    except ValueError:
        raise ValueError(f"'{typed}' is not a number (use a point for decimals)") from None
    if not math.isfinite(value):
        raise ValueError(f"'{typed}' is not a finite number")
    if not low < value < high:
        raise ValueError(
            f"{value_text(value)} is outside the data: use a value above "
            f"{value_text(low)} and below {value_text(high)}"
        )
    return value


class ValuePrompt(ModalScreen[float | None]):
    """Asks for a number; dismisses with it once valid, or with None on Escape."""

    CSS_PATH = "value_prompt.tcss"
    BINDINGS = [Binding("escape", "cancel", "Cancel", tooltip="Close without a change")]

    def __init__(self, title: str, explain: str, low: float, high: float) -> None:
        super().__init__()
        self._title, self._explain, self._low, self._high = title, explain, low, high

    def compose(self) -> ComposeResult:
        with Vertical(id="box"):
            yield Line(self._title, id="title")
            yield Line(self._explain, id="explain")
            yield Input(placeholder=f"{value_text(self._low)} to {value_text(self._high)}")
            yield Line("", id="problem")
            yield Line("Enter: use it   Esc: cancel", id="keys")

    def on_input_changed(self) -> None:
        self.query_one("#problem", Line).update("")

    def on_input_submitted(self, event: Input.Submitted) -> None:
        try:
            value = parse_value(event.value, self._low, self._high)
        except ValueError as problem:
            self.query_one("#problem", Line).update(f"✗ {problem}")
            return
        self.dismiss(value)

    def action_cancel(self) -> None:
        self.dismiss(None)

"""Shown after a decision: what was written, and the first rows recoded as replay will."""

from __future__ import annotations

import numpy as np
from rich.table import Table
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Static

from tui.app.widgets.line import Line
from tui.recodings.model import Decision

PREVIEW_ROWS = 8


def _value(v: float) -> str:
    return "missing" if not np.isfinite(v) else f"{v:.6g}"


def preview_table(decision: Decision, x: np.ndarray) -> Table:
    """The first values of the column beside its outputs (``Recoding.apply`` is what replay
    runs, so these are the numbers a replayed file will hold)."""
    shown = np.asarray(x[:PREVIEW_ROWS], dtype=float)
    outputs = decision.recoding.apply(shown)
    table = Table(box=None, pad_edge=False, header_style="bold")
    table.add_column("row", justify="right")
    table.add_column(decision.column, justify="right")
    for name in decision.recoding.suffixes():
        table.add_column(name, justify="right")
    for i, (value, out) in enumerate(zip(shown, outputs, strict=True), 1):
        table.add_row(str(i), _value(value), *(_value(v) for v in out))
    return table


class RecordedView(ModalScreen[None]):
    """Confirms a decision and shows it applied to the first rows."""

    CSS_PATH = "recorded_view.tcss"
    BINDINGS = [Binding("escape,enter,q", "close", "Close")]

    def __init__(self, decision: Decision, x: np.ndarray, log_name: str) -> None:
        super().__init__()
        self._decision, self._log_name = decision, log_name
        self.preview = preview_table(decision, x)
        """The first rows and their outputs, as shown."""

    def compose(self) -> ComposeResult:
        d = self._decision
        with VerticalScroll(id="box"):
            yield Line(f"Saved to {self._log_name}", id="title")
            yield Line(f"{d.column}: {d.recoding.describe()}")
            yield Line(f"new columns: {', '.join(d.outputs)}", id="outputs")
            yield Line(f"First {PREVIEW_ROWS} rows, recoded exactly as replay will:")
            yield Static(self.preview, id="preview")
            yield Line("Enter or Esc: back", id="keys")

    def action_close(self) -> None:
        self.dismiss(None)

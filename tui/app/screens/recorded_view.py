"""Shown after a decision: what was written, and the first rows recoded as replay will."""

from __future__ import annotations

import numpy as np
from rich.table import Table
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import HorizontalScroll, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Static

from tui.app.widgets.line import Line
from tui.recodings.decisions import KEPT_LINEAR, is_kept_linear
from tui.recodings.model import Decision

PREVIEW_ROWS = 8


def decision_text(decision: Decision) -> str:
    """``kept linear`` or the accepted form."""
    return KEPT_LINEAR if is_kept_linear(decision.recoding) else decision.recoding.describe()


def _value(v: float) -> str:
    return "missing" if not np.isfinite(v) else f"{v:.6g}"


def preview_heading(from_rows: bool) -> str:
    """What the preview shows: a file's first rows, or for a source (whose rows never leave
    the engine) the first values of its counts, so no one reads those as rows."""
    if from_rows:
        return f"First {PREVIEW_ROWS} rows, recoded exactly as replay will:"
    return (
        f"First {PREVIEW_ROWS} values of the engine's counts (rows stay in the engine; "
        "bin means where binned), recoded exactly as replay will:"
    )


def preview_table(decision: Decision, x: np.ndarray, from_rows: bool = True) -> Table:
    """The first values of the column beside its outputs (``Recoding.apply`` is what replay
    runs, so these are the numbers a replayed file will hold)."""
    shown = np.asarray(x[:PREVIEW_ROWS], dtype=float)
    outputs = decision.recoding.apply(shown)
    table = Table(box=None, pad_edge=False, header_style="bold", expand=False)
    # Every output in full: names and values never fold or cut (the box scrolls sideways).
    for name in ("row" if from_rows else "#", decision.column, *decision.outputs):
        table.add_column(name, justify="right", no_wrap=True, min_width=len(name))
    for i, (value, out) in enumerate(zip(shown, outputs, strict=True), 1):
        table.add_row(str(i), _value(value), *(_value(v) for v in out))
    return table


class RecordedView(ModalScreen[None]):
    """Confirms a decision and shows it applied to the first rows."""

    CSS_PATH = "recorded_view.tcss"
    BINDINGS = [
        Binding("escape,enter,q", "close", "Close"),
        Binding("z", "app.undo", "Undo", tooltip="Undo this decision"),
        Binding("left", "scroll(-8)", "Scroll left", show=False),
        Binding("right", "scroll(8)", "Scroll right", show=False),
    ]

    def __init__(
        self, decision: Decision, x: np.ndarray, log_name: str, from_rows: bool = True
    ) -> None:
        super().__init__()
        self._decision, self._log_name, self._from_rows = decision, log_name, from_rows
        self.preview = preview_table(decision, x, from_rows)
        """The first rows and their outputs, as shown."""

    def compose(self) -> ComposeResult:
        d = self._decision
        with VerticalScroll(id="box"):
            yield Line(f"recorded: {d.column} {decision_text(d)}, z undoes", id="title")
            yield Line(f"saved to {self._log_name}")
            yield Line(f"new columns: {', '.join(d.outputs)}", id="outputs")
            yield Line(preview_heading(self._from_rows), id="heading")
            with HorizontalScroll(id="wide"):
                yield Static(self.preview, id="preview")
            yield Line("Enter or Esc: back · ← → scroll sideways · z: undo", id="keys")

    def action_scroll(self, step: int) -> None:
        """Scroll the preview sideways."""
        self.query_one("#wide", HorizontalScroll).scroll_relative(x=step, animate=False)

    def action_close(self) -> None:
        self.dismiss(None)

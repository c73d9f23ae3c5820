"""The cautions that go with every result bendwise shows."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen

from tui.app.widgets.line import Line
from tui.cautions import CAUTIONS


class CautionsView(ModalScreen[None]):
    """Lists the cautions; any of Escape, q or ! closes it."""

    CSS_PATH = "cautions_view.tcss"
    BINDINGS = [Binding("escape,q,exclamation_mark", "close", "Close")]

    def compose(self) -> ComposeResult:
        with VerticalScroll(id="box"):
            yield Line("Cautions", id="title")
            for i, text in enumerate(CAUTIONS, 1):
                yield Line(f"{i}. {text}", classes="caution")
            yield Line("Esc: close", id="keys")

    def action_close(self) -> None:
        self.dismiss(None)

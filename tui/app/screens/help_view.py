"""Every key of every screen, taken from the screens' own bindings."""

from __future__ import annotations

from collections.abc import Callable, Sequence

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen

from tui.app.widgets.line import Line
from tui.app.widgets.triage_table import TriageTable

Section = tuple[str, Sequence[Binding]]
"""A heading and the bindings listed under it."""

MARKS = (
    "Marks before a column name: ✓ a form accepted · = kept linear · × set aside · "
    "! flagged (see the flags field).",
    "Plot: ● empirical logit of a quantile group at its median, │ ±1.96 standard errors, "
    "+ LOWESS smoother, · · · linear fit, braille line the highlighted form, ◂ ▸ values "
    "beyond the window (x spans the central 95% of rows and the groups; y the groups' "
    "intervals and the smoother; curves are cut at its edges).",
    "Recoded view (v): each group's logit against the highlighted form's mean fitted "
    "linear predictor, with the line y = x (· · ·) the groups follow when the form fits.",
    "Shape hints: linear · monotone-curve · u-shape (lowest inside the range) · hump "
    "(highest inside: an inverted U) · threshold (a step). A hint, not a verdict.",
    "q-values and shape hints read … until every column is scanned.",
    "A narrow list drops fields in this order, first to last: "
    + TriageTable.gives_way()
    + " (the column name stays). Which fields show depends on the width only; the line "
    "under the list always gives n, missing, distinct and flags of the highlighted column.",
    "adj (once a score is adjusted): - unadjusted, +N adjusted for N columns, named under "
    "the list. The working model: every column accepted or kept linear, in its form, and "
    "the --adjust columns; set-aside columns stay out.",
)


def binding_text(binding: Binding) -> str:
    """What a key does, in words (the longer tooltip when there is one)."""
    return binding.tooltip or binding.description


def key_text(display: Callable[[Binding], str], binding: Binding) -> str:
    """All keys of a binding, as shown to the user (``?`` not ``question_mark``)."""
    keys = [k.strip() for k in binding.key.split(",") if k.strip()]
    return " / ".join(display(Binding(k, binding.action)) for k in keys)


def _listed_twice(binding: Binding, actions: set[str]) -> bool:
    """An ``app.``-prefixed key whose app action is also listed unprefixed."""
    action = binding.action
    return action.startswith("app.") and action.removeprefix("app.") in actions


class HelpView(ModalScreen[None]):
    """Scrollable list of keys by screen; Escape, q or ? closes it."""

    CSS_PATH = "help_view.tcss"
    BINDINGS = [
        Binding("escape,q,question_mark,f1", "close", "Close"),
        Binding("j", "scroll('down')", "Down", show=False),
        Binding("k", "scroll('up')", "Up", show=False),
    ]

    def __init__(self, sections: Sequence[Section]) -> None:
        super().__init__()
        self._sections = sections

    def compose(self) -> ComposeResult:
        # A screen's key for an app action that has its own line (under "Everywhere")
        # is not listed twice; app actions only a screen offers are listed there.
        own = {b.action for _, bindings in self._sections for b in bindings}
        with VerticalScroll(id="box"):
            yield Line("Keys", id="title")
            for heading, bindings in self._sections:
                yield Line(heading, classes="heading")
                lines = [
                    f"  {key_text(self.app.get_key_display, b):<16} {binding_text(b)}"
                    for b in bindings
                    if b.description and not _listed_twice(b, own)
                ]
                yield Line("\n".join(lines), classes="keys")
            yield Line("How to read the screens", classes="heading")
            yield Line("\n".join(f"  {line}" for line in MARKS), classes="keys")
            yield Line("Esc: close", id="foot")

    def action_scroll(self, direction: str) -> None:
        box = self.query_one("#box", VerticalScroll)
        if direction == "down":
            box.scroll_down()
        else:
            box.scroll_up()

    def action_close(self) -> None:
        self.dismiss(None)

"""How the accepted form codes a missing x: leave it missing, fill it, or fill it and add a
0/1 missing indicator. The figures come from the engine (``compare_fills``); this screen
lays them out, says which rows each uses, and dismisses with the choice."""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Input

from tui.app.screens.value_prompt import ValuePrompt
from tui.app.text import value_text
from tui.app.widgets.line import Line
from tui.cautions import MISSING_CAUTION
from tui.engine.forms.base import MissingFill
from tui.engine.missing_group import FILL, FILL_INDICATOR, FillComparison, FillFit
from tui.report.cells import DEFAULT_MIN_CELL, cell


@dataclass(frozen=True)
class FillChoice:
    """What the analyst chose: a rule, or None to leave missing x missing."""

    rule: MissingFill | None


def parse_fill(text: str) -> float:
    """Any finite number; ValueError says what is wrong."""
    typed = text.strip()
    if not typed:
        raise ValueError("type a number")
    try:
        value = float(typed)
    except ValueError:
        raise ValueError(f"'{typed}' is not a number (use a point for decimals)") from None
    if not math.isfinite(value):
        raise ValueError(f"'{typed}' is not a finite number")
    return value


class FillPrompt(ValuePrompt):
    """Asks for a fill value; any finite number will do (it need not lie inside the data)."""

    def on_input_submitted(self, event: Input.Submitted) -> None:
        try:
            value = parse_fill(event.value)
        except ValueError as problem:
            self.query_one("#problem", Line).update(f"✗ {problem}")
            return
        self.dismiss(value)


def _fit_text(fit: FillFit) -> str:
    if fit.status != "ok":
        return f"did not fit ({fit.status})"
    return f"AIC {fit.aic:.1f}, df {fit.df}"


def choice_lines(comparison: FillComparison, complete_rows: float) -> list[str]:
    """The comparison as the screen shows it, with the rows each figure uses."""
    g = comparison.group
    fill = value_text(comparison.fill)
    mark = {key: "  ▸ best" if comparison.best == key else "" for key in (FILL, FILL_INDICATOR)}
    return [
        f"complete-case table: {cell(complete_rows, DEFAULT_MIN_CELL)} rows with x "
        f"(the {cell(g.n, DEFAULT_MIN_CELL)} with x missing are left out)",
        f"below: all {cell(g.rows, DEFAULT_MIN_CELL)} rows with an outcome, missing x as {fill}",
        "1  leave missing (no output where x is missing; default)",
        f"2  fill with {fill}: {_fit_text(comparison.fill_only)}{mark[FILL]}",
        f"3  fill with {fill} + missing indicator: "
        f"{_fit_text(comparison.with_indicator)}{mark[FILL_INDICATOR]}",
        f"   ΔAIC of the indicator {comparison.delta_aic:+.1f} (negative: it pays its df)",
    ]


class MissingChoiceScreen(ModalScreen[FillChoice | None]):
    """The three choices for one decided column; dismisses with one, or None on Escape."""

    CSS_PATH = "missing_choice.tcss"
    BINDINGS = [
        Binding("1", "choose('leave')", "Leave missing", tooltip="Missing x gives no outputs"),
        Binding("2", "choose('fill')", "Fill", tooltip="Replace a missing x by the fill"),
        Binding("3", "choose('indicator')", "Fill + indicator", tooltip="Fill, and flag the row"),
        Binding("t", "type_fill", "Type fill", tooltip="Type the fill value by hand"),
        Binding("escape", "cancel", "Cancel", tooltip="Close without a change"),
    ]

    def __init__(
        self,
        column: str,
        form: str,
        comparison: FillComparison,
        compare: Callable[[float], FillComparison | None],
        median: float,
    ) -> None:
        super().__init__()
        self._column, self._form, self._compare, self._median = column, form, compare, median
        self.comparison = comparison
        """The figures shown now (for the fill shown)."""

    def compose(self) -> ComposeResult:
        with Vertical(id="box"):
            yield Line(f"Missing {self._column}: how {self._form} codes it", id="title")
            yield Line("", id="figures")
            yield Line(f"Caution: {MISSING_CAUTION}", id="caution")
            yield Line(
                f"1 2 3: choose   t: type a fill (training median {value_text(self._median)})"
                "   Esc: cancel",
                id="keys",
            )

    def on_mount(self) -> None:
        self._show()

    def _show(self) -> None:
        complete = self.comparison.group.observed
        self.query_one("#figures", Line).update("\n".join(choice_lines(self.comparison, complete)))

    def action_choose(self, which: str) -> None:
        fill = self.comparison.fill
        rule = {
            "leave": None,
            "fill": MissingFill(fill),
            "indicator": MissingFill(fill, True),
        }[which]
        self.dismiss(FillChoice(rule))

    def action_type_fill(self) -> None:
        prompt = FillPrompt(
            f"Fill value for a missing {self._column}",
            "Any number; the training median is what bendwise proposes.",
            self._median,
            self._median,
        )
        self.app.push_screen(prompt, self._typed)

    def _typed(self, value: float | None) -> None:
        if value is None:
            return
        found = self._compare(value)
        if found is not None:
            self.comparison = found
            self._show()

    def action_cancel(self) -> None:
        self.dismiss(None)

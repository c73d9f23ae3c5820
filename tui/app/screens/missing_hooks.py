"""The inspection screen's missing-value hooks: the panel beside the plot, and the choice
of how the accepted form codes a missing x (kept apart so the screen stays small)."""

from __future__ import annotations

from typing import TYPE_CHECKING

from tui.app.notices import not_saved, tell
from tui.app.screens.missing_choice import FillChoice, MissingChoiceScreen
from tui.app.session import LogNotSaved
from tui.app.widgets.missing_panel import MissingPanel
from tui.engine.missing_group import training_median

if TYPE_CHECKING:
    from tui.app.fit_cache import ColumnFits
    from tui.app.screens.inspect import InspectScreen


def show_panel(screen: InspectScreen, fits: ColumnFits) -> None:
    """Show the column's missing rows beside the plot (hidden when none is missing)."""
    group = screen.session.missing_group(screen.column)
    screen.query_one(MissingPanel).show_group(group, fits.groups)


def open_choice(screen: InspectScreen) -> None:
    """Open the choice for the decided column, with the engine's comparison."""
    session, column = screen.session, screen.column
    decision = session.log.decision_for(column)
    if decision is None:
        tell(screen, "accept a form first (a or l): the choice is for the accepted form")
        return
    x = session.dataset.raw_values(column)
    comparison = session.fill_comparison(column)
    if comparison is None:
        tell(screen, f"{column} has no missing values", timeout=3)
        return
    form = decision.recoding.without_missing().describe()
    chooser = MissingChoiceScreen(
        column,
        form,
        comparison,
        lambda fill: session.fill_comparison(column, fill),
        training_median(x),
    )
    screen.app.push_screen(chooser, lambda choice: _chosen(screen, column, choice))


def _chosen(screen: InspectScreen, column: str, choice: FillChoice | None) -> None:
    if choice is None:
        return
    try:
        decision = screen.session.set_missing(column, choice.rule)
    except LogNotSaved as problem:
        not_saved(screen, problem)
        return
    screen._after_change()
    tell(screen, f"{column}: {decision.recoding.describe()} (saved)", timeout=4)

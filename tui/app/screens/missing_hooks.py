"""The inspection screen's missing-value hooks: the panel beside the plot, and the choice
of how the accepted form codes a missing x (kept apart so the screen stays small)."""

from __future__ import annotations

from collections.abc import Callable

from textual.screen import Screen

from tui.app.fit_cache import ColumnFits
from tui.app.notices import not_saved, tell
from tui.app.screens.missing_choice import FillChoice, MissingChoiceScreen
from tui.app.session import LogNotSaved, ReviewSession
from tui.app.widgets.missing_panel import MissingPanel


def show_panel(screen: Screen, session: ReviewSession, column: str, fits: ColumnFits) -> None:
    """Show the column's missing rows beside the plot (hidden when none is missing)."""
    screen.query_one(MissingPanel).show_group(session.missing_group(column), fits.groups)


def open_choice(
    screen: Screen, session: ReviewSession, column: str, after: Callable[[], None]
) -> None:
    """Open the choice for the decided column, with the engine's comparison; ``after``
    redraws the screen once a choice is saved."""
    decision = session.log.decision_for(column)
    if decision is None:
        tell(screen, "accept a form first (a or l): the choice is for the accepted form")
        return
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
        session.training_median(column),
    )
    screen.app.push_screen(chooser, lambda choice: _chosen(screen, session, column, choice, after))


def _chosen(
    screen: Screen,
    session: ReviewSession,
    column: str,
    choice: FillChoice | None,
    after: Callable[[], None],
) -> None:
    if choice is None:
        return
    try:
        decision = session.set_missing(column, choice.rule)
    except LogNotSaved as problem:
        not_saved(screen, problem)
        return
    after()
    tell(screen, f"{column}: {decision.recoding.describe()} (saved)", timeout=4)

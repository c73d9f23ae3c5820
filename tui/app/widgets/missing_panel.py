"""The missing rows of a column, drawn beside the plot as a mark of their own.

Missing x has no place on the x axis, so the group stands apart: its rows (under the small-
cell rule of the report), event rate and empirical logit with ±1.96 SE, beside the range of
the observed groups' logits for comparison. Numbers come from the engine; this only
formats them.
"""

from __future__ import annotations

from collections.abc import Sequence

from tui.app.widgets.line import Line
from tui.engine.groups import LogitGroup
from tui.engine.missing_group import MissingGroup
from tui.report.cells import DEFAULT_MIN_CELL, cell, group_is_safe

Z95 = 1.96
PANEL_WIDTH = 16
MARK = "◆"
"""The missing group's mark: not the ● of the observed groups."""


def missing_lines(
    group: MissingGroup, observed: Sequence[LogitGroup], min_cell: int = DEFAULT_MIN_CELL
) -> list[str]:
    """The panel's lines: the group, and the observed groups' logits for comparison."""
    lines = ["missing x", f"rows {cell(group.n, min_cell)}"]
    if not group_is_safe(group.n, group.events, min_cell):
        lines += ["rate, logit", f"withheld (<{min_cell})"]
    else:
        reach = Z95 * group.se
        lines += [
            f"rate {group.proportion:.3f}",
            f"{MARK} logit {group.logit:.2f}",
            f"±1.96 SE {reach:.2f}",
        ]
    if observed:
        low = min(g.logit for g in observed)
        high = max(g.logit for g in observed)
        lines += ["observed ●", f"{low:.2f} to {high:.2f}"]
    lines.append("f: code it")
    return lines


class MissingPanel(Line):
    """Beside the plot; hidden when the column has no missing values."""

    def show_group(self, group: MissingGroup | None, observed: Sequence[LogitGroup]) -> None:
        """Show ``group`` (None hides the panel)."""
        self.display = group is not None
        self.update("" if group is None else "\n".join(missing_lines(group, observed)))

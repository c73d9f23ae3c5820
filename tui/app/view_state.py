"""What the screens keep between them: the list's order, numbers typed by hand, and notes
typed for columns not yet decided. Written by the screens only; the decisions themselves
live in the log (``tui.recodings.decisions``)."""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass
class ReviewView:
    """The screens' state of one review (nothing here is saved)."""

    order: list[str] = field(default_factory=list)
    """Columns in the order the list screen shows them (for previous / next)."""
    hand_cuts: dict[str, tuple[float, ...]] = field(default_factory=dict)
    """Indicator cut points typed for each column."""
    hand_hinges: dict[str, tuple[float, ...]] = field(default_factory=dict)
    """Hinge knots typed for each column."""
    drafts: dict[str, str] = field(default_factory=dict)
    """Notes typed for columns not yet decided."""
    settings: dict[str, tuple[int, int]] = field(default_factory=dict)
    """Groups and knots set on the column screen for each column (while the app runs)."""
    above: set[str] = field(default_factory=set)
    """Columns whose indicators read 1 from the cut point upwards (else below it)."""

    def neighbour(self, column: str, step: int) -> str | None:
        """The column ``step`` places away in the list's order (None past either end)."""
        if column not in self.order:
            return self.order[0] if self.order else None
        i = self.order.index(column) + step
        return self.order[i] if 0 <= i < len(self.order) else None

    def note(self, column: str, saved: str) -> str:
        """The note to show and record for the column: the draft, else the ``saved`` one."""
        return self.drafts.get(column, saved)

    def settings_of(self, column: str, start: tuple[int, int]) -> tuple[int, int]:
        """The column's groups and knots: those set for it, else ``start``."""
        return self.settings.get(column, start)

    def add_cut(self, column: str, value: float) -> None:
        """One more indicator cut point typed for ``column``."""
        self.hand_cuts[column] = self.hand_cuts.get(column, ()) + (value,)

    def side(self, column: str) -> str:
        """Which side of its cut an indicator of ``column`` reads 1."""
        return "above" if column in self.above else "below"

    def flip_side(self, column: str) -> None:
        """Indicators of ``column`` read 1 on the other side of the cut from now on."""
        self.above ^= {column}

    def add_hinge(self, column: str, value: float) -> None:
        """One more hinge knot typed for ``column``."""
        self.hand_hinges[column] = self.hand_hinges.get(column, ()) + (value,)

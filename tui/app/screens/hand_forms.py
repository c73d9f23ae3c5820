"""The column screen's settings keys and hand-entered forms: groups, knots, the indicator
side, and a typed cut point or hinge knot (a hook the column screen mixes in; it owns the
view state these keys change)."""

from __future__ import annotations

from tui.app.notices import tell
from tui.app.screens.column_lines import KNOT_CHOICES, next_choice
from tui.app.screens.value_prompt import ValuePrompt
from tui.app.widgets.forms_table import FormsTable
from tui.engine.forms.hinge import HingeCandidate
from tui.engine.forms.indicator import IndicatorCandidate
from tui.engine.groups import GROUP_CHOICES

SIDE_TIP = "Indicators read 1 on the other side of the cut point"
SIDE_WORDS = {
    "below": "The indicator is 1 below the cut point and 0 from it upwards (b: the other side).",
    "above": "The indicator is 1 from the cut point upwards and 0 below it (b: the other side).",
}


class HandFormsHook:
    """Keys of the column screen that change its settings or add a hand-entered form.

    The screen provides ``column``, ``groups``, ``knots``, ``view``, ``session``,
    ``request()``, ``_load()``, ``_refresh_heading()`` and ``_want_key``.
    """

    def action_cycle_groups(self) -> None:
        """Next number of quantile groups (4, 5, 10, 20)."""
        self.view.settings[self.column] = (next_choice(GROUP_CHOICES, self.groups), self.knots)
        self._refresh_heading()
        self._load(self.query_one(FormsTable).highlighted_key() or self._want_key)

    def action_flip_side(self) -> None:
        """Indicators read 1 on the other side of their cut point (the fit is the same;
        the coefficient changes sign, and the log records the side)."""
        self.view.flip_side(self.column)
        tell(self, f"indicators now read 1 {self.view.side(self.column)} the cut", timeout=3)
        self._load(self.query_one(FormsTable).highlighted_key() or self._want_key)

    def action_cycle_knots(self) -> None:
        """Next number of spline knots (3 to 7)."""
        self.view.settings[self.column] = (self.groups, next_choice(KNOT_CHOICES, self.knots))
        self._refresh_heading()
        # The highlight stays where it is: the spline row is refitted, not chosen.
        self._load(self.query_one(FormsTable).highlighted_key() or self._want_key)

    def _range(self) -> tuple[float, float] | None:
        profile = self.session.profile_of(self.column)
        if profile.minimum is None or profile.maximum is None:
            return None
        if profile.minimum >= profile.maximum:
            return None
        return profile.minimum, profile.maximum

    def action_enter_cut(self) -> None:
        """Type a cut point for an indicator (1 when x < c)."""
        span = self._range()
        if span is None:
            tell(self, "no range of values to cut", severity="warning")
            return
        prompt = ValuePrompt(
            f"Cut point for {self.column}",
            SIDE_WORDS[self.view.side(self.column)],
            *span,
        )
        self.app.push_screen(prompt, self._cut_entered)

    def action_enter_hinge(self) -> None:
        """Type the knot of a hinge (x, and x beyond the knot)."""
        span = self._range()
        if span is None:
            tell(self, "no range of values to place a knot in", severity="warning")
            return
        prompt = ValuePrompt(
            f"Hinge knot for {self.column}",
            "The slope may change at the knot: x and max(x − knot, 0).",
            *span,
        )
        self.app.push_screen(prompt, self._hinge_entered)

    def _cut_entered(self, value: float | None) -> None:
        if value is None:
            return
        cut = IndicatorCandidate(cut=value, side=self.view.side(self.column))
        known = {c.label: c.key for c in self.request().wanted.by_hand()}
        if cut.label not in known:  # 12.5 and 12.5000001 read the same
            self.view.add_cut(self.column, value)
        self._load(known.get(cut.label, cut.key))

    def _hinge_entered(self, value: float | None) -> None:
        if value is None:
            return
        hinge = HingeCandidate(knot=value)
        known = {c.label: c.key for c in self.request().wanted.by_hand()}
        if hinge.label not in known:
            self.view.add_hinge(self.column, value)
        self._load(known.get(hinge.label, hinge.key))

"""The footer of key hints, rebuilt only when keys it has not made are wanted."""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import Footer
from textual.widgets._footer import FooterKey

from tui.app.widgets.steady import lay_out_now

MOST_KEYS = 40
"""Keys made at most; beyond this a rebuild makes only those wanted."""


@dataclass(frozen=True)
class Hint:
    """One key as the footer shows it."""

    binding: Binding
    enabled: bool
    tooltip: str
    palette: bool = False
    """The command palette's key (docked at the right, outside the grid)."""


def merged(made: Sequence[Hint], wanted: Sequence[Hint]) -> list[Hint]:
    """The keys made with those wanted that are missing, each list's order kept."""
    out: list[Hint] = []
    i = j = 0
    while i < len(made) and j < len(wanted):
        if made[i] == wanted[j]:
            out.append(made[i])
            i, j = i + 1, j + 1
        elif made[i] in wanted[j:]:
            out.append(wanted[j])
            j += 1
        else:
            out.append(made[i])
            i += 1
    return [*out, *made[i:], *wanted[j:]]


def among(wanted: Sequence[Hint], made: Sequence[Hint]) -> bool:
    """Every wanted key is among those made, in the same order."""
    rest = iter(made)
    return all(any(key == m for m in rest) for key in wanted)


class KeyFooter(Footer):
    """Textual's footer removes and mounts all its keys again whenever the screen's keys
    may have changed (each focus move does so twice, a screen shown again once), and the
    screen is laid out again after each rebuild, in a frame of its own after the key's.
    This one keeps the keys it has made and only hides or shows them when the keys
    wanted are among them (the list's keys come and go with the filter box's focus); it
    rebuilds when a key is wanted that it has not made, making it beside the others."""

    def __init__(self, *, compact: bool = False) -> None:
        super().__init__(compact=compact)
        self._made: list[Hint] = []
        self._shown: list[Hint] | None = None

    def _wanted(self) -> list[Hint] | None:
        """The keys ``Footer.compose`` would show now, in its order (None: grouped keys,
        which Textual's own rebuild shows)."""
        actions: dict[str, Hint] = {}
        palette: list[Hint] = []
        for key, active in self.screen.active_bindings.items():
            binding = active.binding
            palette_on = self.show_command_palette and self.app.ENABLE_COMMAND_PALETTE
            if key == self.app.COMMAND_PALETTE_BINDING and palette_on:
                tip = binding.tooltip or binding.description
                palette = [Hint(binding, active.enabled, tip, palette=True)]
            if not binding.show:
                continue
            if binding.group is not None:
                return None
            if binding.action not in actions:  # the first of an action's keys is shown
                actions[binding.action] = Hint(binding, active.enabled, active.tooltip)
        return [*actions.values(), *palette]

    def compose(self) -> ComposeResult:
        if not self._bindings_ready:
            return
        wanted = self._wanted()
        if wanted is None:
            self._made, self._shown = [], None
            yield from super().compose()
            return
        made = merged(self._made, wanted)
        self._made = made if len(made) <= MOST_KEYS else wanted
        self._shown = wanted
        on = self._places(wanted)
        for index, key in enumerate(self._keys(self._made)):
            key.display = index in on
            yield key
        self.styles.grid_size_columns = sum(1 for hint in wanted if not hint.palette)

    def _keys(self, hints: Iterable[Hint]) -> Iterable[FooterKey]:
        """A footer key per hint, as ``Footer.compose`` makes them."""
        for hint in hints:
            b = hint.binding
            shown = self.app.get_key_display(b)
            if hint.palette:
                yield FooterKey(
                    b.key,
                    shown,
                    b.description,
                    b.action,
                    classes="-command-palette",
                    disabled=not hint.enabled,
                    tooltip=hint.tooltip,
                )
                continue
            key = FooterKey(
                b.key,
                shown,
                b.description,
                b.action,
                disabled=not hint.enabled,
                tooltip=hint.tooltip,
            )
            yield key.data_bind(compact=Footer.compact)

    def _places(self, wanted: Sequence[Hint]) -> set[int]:
        """Where the keys wanted are among those made."""
        on = set()
        rest = iter(enumerate(self._made))
        for hint in wanted:
            for index, made in rest:
                if made == hint:
                    on.add(index)
                    break
        return on

    def _show(self, wanted: Sequence[Hint]) -> None:
        """Show the keys wanted, hide the others (their grid columns too)."""
        on = self._places(wanted)
        for index, key in enumerate(self.query_children(FooterKey)):
            key.display = index in on
        self.styles.grid_size_columns = sum(1 for hint in wanted if not hint.palette)

    def bindings_changed(self, screen: Screen) -> None:
        self._bindings_ready = True
        if not screen.app.app_focus:
            return
        if self.is_attached and screen is self.screen:
            # Straight after the key's own changes, so they are drawn in one frame.
            self.call_later(self._follow_keys)

    def follow_now(self) -> None:
        """Show the keys wanted now, when they are among those made (a screen calls it at
        the end of a key that moves the focus, so the footer changes in the key's frame;
        the call that follows the focus change then finds nothing to do)."""
        wanted = self._wanted()
        keys = list(self.query_children(FooterKey))
        if wanted is None or wanted == self._shown or len(keys) != len(self._made):
            return
        if among(wanted, self._made):
            self._show(wanted)
            self._shown = wanted

    async def _follow_keys(self) -> None:
        if not self.is_attached:
            return
        wanted = self._wanted()
        if wanted is not None and wanted == self._shown:
            return
        keys = list(self.query_children(FooterKey))
        if wanted is None or len(keys) != len(self._made) or not among(wanted, self._made):
            await self.recompose()
            return
        with self.app.batch_update():
            self._show(wanted)
        self._shown = wanted
        lay_out_now(self.screen)  # the keys shown or hidden in the key's own frame

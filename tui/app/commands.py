"""Every key's action in the command palette, for the screen it was opened from."""

from __future__ import annotations

from collections.abc import Iterator
from functools import partial

from textual.binding import Binding
from textual.command import DiscoveryHit, Hit, Hits, Provider
from textual.dom import DOMNode

from tui.app.screens.help_view import binding_text, key_text


def _bindings(node: DOMNode) -> list[Binding]:
    return [b for b in node.BINDINGS if isinstance(b, Binding) and b.description]


class ReviewCommands(Provider):
    """The current screen's actions, then the app's, each named in words."""

    def _commands(self) -> Iterator[tuple[str, str, object]]:
        seen: set[str] = set()
        for node in (self.screen, self.app):
            for binding in _bindings(node):
                name = binding_text(binding)
                if name in seen:
                    continue
                seen.add(name)
                keys = key_text(self.app.get_key_display, binding)
                yield name, f"key: {keys}", partial(node.run_action, binding.action)

    async def discover(self) -> Hits:
        for name, help_text, run in self._commands():
            yield DiscoveryHit(name, run, help=help_text)  # type: ignore[arg-type]

    async def search(self, query: str) -> Hits:
        matcher = self.matcher(query)
        for name, help_text, run in self._commands():
            score = matcher.match(name)
            if score > 0:
                yield Hit(score, matcher.highlight(name), run, help=help_text)  # type: ignore[arg-type]

"""Plain text that is never read as markup (column names and notes may hold brackets)."""

from __future__ import annotations

from typing import TYPE_CHECKING

from textual.widgets import Static

from tui.app.widgets.steady import NoScrollSize

if TYPE_CHECKING:
    from textual.visual import VisualType


class Line(NoScrollSize, Static):
    """A ``Static`` with markup off, laid out again only when its height changes."""

    def __init__(
        self, text: str = "", *, id: str | None = None, classes: str | None = None
    ) -> None:  # noqa: A002
        super().__init__(text, markup=False, id=id, classes=classes)
        self._text: str | None = text  # as last given (None: not a plain string)

    def update(self, content: VisualType = "", *, layout: bool = True) -> None:
        """Show new text. A layout of the screen measures and draws every widget again
        (tens of ms beside a list of 2,000 rows, on every cursor move that updates a line
        of detail): a line as wide as its container whose new text takes as many lines
        at its width as the old one is only drawn again."""
        if isinstance(content, str) and content == self._text:
            return  # the same text: nothing to draw (a redraw of the list gives most lines again)
        self._text = content if isinstance(content, str) else None
        width = self.content_size.width
        rule = self.styles.width
        steady = width > 0 and hasattr(self, "visual") and (rule is None or not rule.is_auto)
        if not layout or not steady:
            super().update(content, layout=layout)
            return
        before = self.visual.get_height(self.styles, width)
        super().update(content, layout=False)
        if self.visual.get_height(self.styles, width) != before:
            self.refresh(layout=True)

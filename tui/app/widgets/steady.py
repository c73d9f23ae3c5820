"""Widgets whose new size asks for no second layout of the screen."""

from __future__ import annotations

from textual.geometry import Size
from textual.widget import Widget


class NoScrollSize:
    """For a widget that never scrolls (overflow hidden both ways): a layout that gives
    it a new size asks for no second layout.

    Textual's layout gives each widget its size and scrollable size, and a changed
    scrollable size asks for a layout again; for a widget that cannot scroll that second
    layout changes nothing, yet it costs the screen another frame (opening a column drew
    its plot and forms, then laid the screen out again because the plot had grown)."""

    def _size_updated(
        self, size: Size, virtual_size: Size, container_size: Size, layout: bool = True
    ) -> bool:
        styles = self.styles  # type: ignore[attr-defined]
        if styles.overflow_x == "hidden" and styles.overflow_y == "hidden":
            layout = False  # the scrollable size is kept, as Textual does while scrolling
        return super()._size_updated(size, virtual_size, container_size, layout)  # type: ignore[misc]


def lay_out_now(screen: Widget) -> None:
    """Hand the screen every layout and redraw its widgets have asked for, now.

    A widget asks the screen for a layout or a redraw only once it is idle itself, and
    the screen may draw its next frame before that: a key that hides a box or fills a
    table then costs a frame without the layout and a second frame with it. Called at
    the end of such a handler, the screen takes the requests before it draws."""
    for widget in screen.walk_children(Widget):
        # Textual's own flags and hand-over (read with getattr: another Textual may name
        # them otherwise, and the requests then go to the screen when idle, as before).
        flags = ("_layout_required", "_repaint_required", "_scroll_required")
        hand_over = getattr(widget, "_check_refresh", None)
        if hand_over is not None and any(getattr(widget, flag, False) for flag in flags):
            hand_over()  # what the widget does when idle: tell the screen

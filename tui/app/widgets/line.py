"""Plain text that is never read as markup (column names and notes may hold brackets)."""

from __future__ import annotations

from textual.widgets import Static


class Line(Static):
    """A ``Static`` with markup off."""

    def __init__(
        self, text: str = "", *, id: str | None = None, classes: str | None = None
    ) -> None:  # noqa: A002
        super().__init__(text, markup=False, id=id, classes=classes)

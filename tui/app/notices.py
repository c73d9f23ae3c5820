"""Short messages in the corner of the screen, shown as plain text."""

from __future__ import annotations

from textual.dom import DOMNode
from textual.notifications import SeverityLevel


def tell(
    node: DOMNode, text: str, *, severity: SeverityLevel = "information", timeout: float = 4.0
) -> None:
    """Show ``text`` as is: column names and notes may hold brackets, never markup."""
    node.app.notify(text, severity=severity, timeout=timeout, markup=False)


def not_saved(node: DOMNode, problem: Exception) -> None:
    """The log could not be written: say so plainly and for long enough to read."""
    tell(node, f"NOT SAVED: {problem}", severity="error", timeout=12.0)

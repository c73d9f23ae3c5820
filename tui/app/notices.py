"""Short messages in the corner of the screen, shown as plain text."""

from __future__ import annotations

from textual.dom import DOMNode
from textual.notifications import SeverityLevel

from tui.recodings.decisions import ReadOnlyLog


def tell(
    node: DOMNode, text: str, *, severity: SeverityLevel = "information", timeout: float = 4.0
) -> None:
    """Show ``text`` as is: column names and notes may hold brackets, never markup."""
    node.app.notify(text, severity=severity, timeout=timeout, markup=False)


def not_saved(node: DOMNode, problem: Exception) -> None:
    """The log could not be written: say so plainly and for long enough to read."""
    if isinstance(problem, ReadOnlyLog):  # a refusal by design, not a failure
        tell(node, str(problem), severity="warning", timeout=6.0)
        return
    tell(node, f"NOT SAVED: {problem}", severity="error", timeout=12.0)

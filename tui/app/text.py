"""Numbers and names as short text for the screens (display only: no statistics here).

The number formats are the shared ones of ``tui.numbers_text``, re-exported for the screens.
"""

from __future__ import annotations

from tui.numbers_text import is_number, number_text, p_text, value_text

__all__ = ["is_number", "number_text", "p_text", "path_text", "value_text"]


def path_text(path_name: str, cwd: str) -> str:
    """A path shown relative to the working folder when it lies inside it."""
    prefix = cwd.rstrip("/") + "/"
    return path_name[len(prefix) :] if path_name.startswith(prefix) else path_name

"""The one exception type for unusable input, and help for wording its messages."""

from __future__ import annotations

import difflib
from collections.abc import Iterable


class InputProblem(Exception):
    """Unusable input, described in one user-facing line.

    The command line prints ``bendwise: <message>`` and exits with status 2, so the message
    must stand on its own: name the file or column and say what is wrong with it.
    """

    def __init__(self, message: str) -> None:
        # Messages often embed text from third-party errors; keep them to one line so the
        # command line's single "bendwise: ..." line stays readable.
        super().__init__(" ".join(str(message).split()))


def closest_names(name: str, choices: Iterable[str], limit: int = 3) -> list[str]:
    """Up to ``limit`` names from ``choices`` that look like ``name`` (case ignored), best first."""
    by_lower: dict[str, str] = {}
    for choice in choices:
        by_lower.setdefault(str(choice).lower(), str(choice))
    found = difflib.get_close_matches(name.lower(), list(by_lower), n=limit, cutoff=0.6)
    return [by_lower[key] for key in found]

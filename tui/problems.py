"""The one exception type for unusable input, shared by every room.

It lives at the package root, beside ``atomic.py``, so that intake, engine and the recoding
log can all raise it without importing one another.
"""

from __future__ import annotations


class InputProblem(Exception):
    """Unusable input, described in one user-facing line.

    The command line prints ``bendwise: <message>`` and exits with status 2, so the message
    must stand on its own: name the file or column and say what is wrong with it.
    """

    def __init__(self, message: str) -> None:
        # Messages often embed text from third-party errors; keep them to one line so the
        # command line's single "bendwise: ..." line stays readable.
        super().__init__(" ".join(str(message).split()))

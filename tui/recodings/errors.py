"""The one error a recoding log raises: it names the file and the entry at fault."""

from __future__ import annotations

from collections.abc import Iterable

from tui.problems import InputProblem


class EntryProblem(ValueError):
    """A problem at one place in a log document, before the file's name is known."""

    def __init__(self, path: str, what: str) -> None:
        super().__init__(f"{path}: {what}" if path else what)
        self.path = path
        self.what = what


class LogProblem(InputProblem):
    """An unusable recoding log, in one line: ``<file>: <entry path>: <what is wrong>``.

    A subclass of ``InputProblem``, so the command line prints it and exits with status 2.
    """

    def __init__(self, source: str, path: str, what: str) -> None:
        super().__init__(f"{source}: {path}: {what}" if path else f"{source}: {what}")
        self.source = source
        self.path = path
        self.what = what


def entry_path(parts: Iterable[str | int]) -> str:
    """``recodings[3].params.knots`` from the keys and indexes leading to a value."""
    text = ""
    for part in parts:
        if isinstance(part, int):
            text += f"[{part}]"
        else:
            text += f".{part}" if text else str(part)
    return text

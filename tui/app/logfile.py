"""The app's one door to the recoding log's file functions.

The file format, its validation and atomic saving live in ``tui.recodings``; the app loads
and saves only through these two functions, so a rename there touches this file alone.
"""

from __future__ import annotations

from pathlib import Path

from tui import recodings
from tui.recodings.model import RecodingLog


def load_log(path: Path) -> RecodingLog:
    """Read and validate a recoding log (raises the log module's error for a bad file)."""
    return recodings.load_log(path)


def save_log(log: RecodingLog, path: Path) -> None:
    """Write the log atomically: a crash leaves the old file or the new one, never half."""
    recodings.save_log(log, path)

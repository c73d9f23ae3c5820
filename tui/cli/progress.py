"""Scan progress on stderr (rich's progress display), drawn only when stderr is a terminal.

Piped or redirected stderr gets nothing, so scripts and logs see only the result.
"""

from __future__ import annotations

import sys
from typing import Any, TextIO

LABEL_WIDTH = 24
"""Column names are cut to this many characters so the bar does not jump about."""


class Progress:
    """``step`` once per column scanned, then ``close``; both do nothing when not enabled."""

    def __init__(self, total: int, enabled: bool, file: TextIO | None = None) -> None:
        self.total, self.done = total, 0
        self._bar = None
        if enabled and total:
            self._bar = _start(total, file if file is not None else sys.stderr)

    def step(self, label: str) -> None:
        self.done += 1
        if self._bar is not None:
            display, task = self._bar
            display.update(task, advance=1, column=f"{label[:LABEL_WIDTH]:<{LABEL_WIDTH}}")

    def close(self) -> None:
        if self._bar is not None:
            self._bar[0].stop()  # transient: the display is cleared, the table follows
            self._bar = None


def _start(total: int, file: TextIO) -> tuple[Any, Any]:
    # Imported here: a run with stderr redirected never loads rich.
    from rich.console import Console
    from rich.progress import (
        BarColumn,
        MofNCompleteColumn,
        ProgressColumn,
        TextColumn,
        TimeElapsedColumn,
        TimeRemainingColumn,
    )
    from rich.progress import (
        Progress as Display,
    )
    from rich.text import Text

    class RateColumn(ProgressColumn):
        """Columns scanned per second (rich's own speed column counts bytes)."""

        def render(self, task: Any) -> Text:
            speed = task.finished_speed or task.speed
            return Text("-/s" if speed is None else f"{speed:.1f}/s", no_wrap=True)

    display = Display(
        TextColumn("scanning"),
        BarColumn(bar_width=None),
        MofNCompleteColumn(),
        TimeElapsedColumn(),
        RateColumn(),
        TimeRemainingColumn(),
        TextColumn("left"),
        TextColumn("{task.fields[column]}"),
        console=Console(file=file),
        transient=True,
    )
    task = display.add_task("scan", total=total, column="")
    display.start()
    return display, task

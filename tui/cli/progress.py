"""A one-line progress bar on stderr, drawn only when stderr is a terminal."""

from __future__ import annotations

import sys


class Progress:
    def __init__(self, total: int, enabled: bool, width: int = 30) -> None:
        self.total, self.enabled, self.width, self.done = total, enabled, width, 0

    def step(self, label: str) -> None:
        self.done += 1
        if not self.enabled or not self.total:
            return
        filled = int(self.width * self.done / self.total)
        bar = "#" * filled + "." * (self.width - filled)
        sys.stderr.write(f"\rscanning [{bar}] {self.done}/{self.total} {label[:30]:<30}")
        sys.stderr.flush()

    def close(self) -> None:
        if self.enabled and self.total:
            sys.stderr.write("\r" + " " * (self.width + 50) + "\r")
            sys.stderr.flush()

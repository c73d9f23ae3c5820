"""Keep each benchmark's figures in a results file beside it, rewritten by the run itself.

A benchmark prints as usual inside ``recorded(name)``; when the block ends without an error
the printout goes to ``benchmarks/results/<name>.md`` under "Latest run", with the date,
the machine (cores, memory, Python and numpy versions) and the exact command. Everything
from the line "## Recorded earlier" on is kept as it is, so figures that back a design
choice survive the next run. A failed run writes nothing.
"""

from __future__ import annotations

import io
import os
import platform
import shlex
import sys
from collections.abc import Iterator
from contextlib import contextmanager
from datetime import UTC, datetime
from pathlib import Path
from typing import TextIO

import numpy as np

REPO = Path(__file__).resolve().parent.parent
if str(REPO) not in sys.path:  # run as a script from anywhere
    sys.path.insert(0, str(REPO))

from tui.atomic import atomic_write_text  # noqa: E402

RESULTS = Path(__file__).resolve().parent / "results"
KEPT = "## Recorded earlier"


class _Tee(io.TextIOBase):
    """Writes go to the terminal and to a buffer."""

    def __init__(self, terminal: TextIO) -> None:
        self.terminal = terminal
        self.buffer_ = io.StringIO()

    def write(self, text: str) -> int:
        self.terminal.write(text)
        return self.buffer_.write(text)

    def flush(self) -> None:
        self.terminal.flush()


def results_path(name: str) -> Path:
    """Where the benchmark ``name`` keeps its figures."""
    return RESULTS / f"{name}.md"


def memory_gib() -> float | None:
    """Physical memory of the machine, or None where the system does not say."""
    try:
        return os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES") / 2**30
    except (AttributeError, OSError, ValueError):
        return None


def machine() -> str:
    """Cores, memory, system, Python and numpy: what moves every timing."""
    memory = memory_gib()
    shown = "memory unknown" if memory is None else f"{memory:.1f} GiB memory"
    return (
        f"{os.cpu_count()} cores, {shown}, {platform.system()} {platform.machine()}; "
        f"Python {platform.python_version()}, numpy {np.__version__}"
    )


def render(name: str, printout: str, command: str, when: datetime, kept: str) -> str:
    """The results file: how to regenerate it, the latest run, then what was kept."""
    head = (
        f"# {name}: results\n\n"
        f"Written by `benchmarks/{name}.py` at the end of each run: the section "
        '"Latest run" is replaced, the section "Recorded earlier" is kept as it is.\n\n'
        "## Latest run\n\n"
        f"- date: {when.isoformat(timespec='seconds')}\n"
        f"- command: `{command}` (from the repository root)\n"
        f"- machine: {machine()}\n\n"
        f"```text\n{printout.rstrip()}\n```\n"
    )
    return head + (f"\n{kept.rstrip()}\n" if kept.strip() else "")


def kept_part(path: Path) -> str:
    """The text from "## Recorded earlier" on, if the file has one."""
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        return ""
    at = text.find(f"\n{KEPT}\n")
    if text.startswith(f"{KEPT}\n"):
        return text
    return "" if at < 0 else text[at + 1 :]


@contextmanager
def recorded(name: str, path: Path | None = None) -> Iterator[None]:
    """Print as usual; on success also write the printout to the results file."""
    target = results_path(name) if path is None else Path(path)
    tee = _Tee(sys.stdout)
    started = datetime.now(UTC)
    sys.stdout = tee
    try:
        yield
    finally:
        sys.stdout = tee.terminal
    command = shlex.join(sys.orig_argv)
    text = render(name, tee.buffer_.getvalue(), command, started, kept_part(target))
    target.parent.mkdir(parents=True, exist_ok=True)
    atomic_write_text(target, text)
    print(f"figures written to {target}")

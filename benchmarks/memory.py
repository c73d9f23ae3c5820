"""Run a command and measure its wall time and peak memory, worker processes included.

Two figures: the largest resident set of any one process of the run (the kernel's count,
as GNU time reports it), and the peak of the summed proportional set size (PSS) of the
process and all its descendants, sampled every 20 ms from /proc. PSS splits the pages that
forked workers share among them, so the sum is the memory the whole scan occupies.

The command runs under /usr/bin/time when there is one: a process started straight from a
large parent (this benchmark holds the data) inherits the parent's peak in the kernel's
count until it replaces itself with the command, which would report the parent's size.
"""

from __future__ import annotations

import os
import subprocess
import tempfile
import threading
import time
from dataclasses import dataclass, replace
from pathlib import Path


@dataclass(frozen=True)
class Measured:
    """What one run of a command cost."""

    seconds: float
    """Wall time."""
    returncode: int
    """The command's exit status."""
    max_rss_mb: float
    """Largest resident set of any single process of the run (MiB)."""
    peak_pss_mb: float | None
    """Peak summed PSS of the process tree (MiB); None where /proc cannot say."""


def _children() -> dict[int, list[int]]:
    tree: dict[int, list[int]] = {}
    for entry in Path("/proc").iterdir():
        if not entry.name.isdigit():
            continue
        try:
            stat = (entry / "stat").read_text()
        except OSError:
            continue
        # The command name is in parentheses and may hold spaces: read after the last ')'.
        parent = int(stat.rsplit(")", 1)[1].split()[1])
        tree.setdefault(parent, []).append(int(entry.name))
    return tree


def _pss_kib(pid: int) -> int:
    try:
        for line in Path(f"/proc/{pid}/smaps_rollup").read_text().splitlines():
            if line.startswith("Pss:"):
                return int(line.split()[1])
    except (OSError, ValueError):
        pass
    return 0


def _tree_pss_kib(root: int) -> int:
    tree = _children()
    total, stack = 0, [root]
    while stack:
        pid = stack.pop()
        total += _pss_kib(pid)
        stack.extend(tree.get(pid, []))
    return total


GNU_TIME = Path("/usr/bin/time")


def run_measured(
    command: list[str], env: dict[str, str] | None = None, sample: bool = True
) -> Measured:
    """Run ``command`` (output discarded) and measure it. ``sample=False`` leaves out the
    PSS sampler (``peak_pss_mb`` None): its reads of every process's smaps_rollup walk the
    page tables of the processes measured, which slowed a 4-second scan by about a third."""
    readable = sample and Path("/proc/self/smaps_rollup").exists()
    with tempfile.TemporaryDirectory() as folder:
        report = Path(folder) / "peak_kib"
        timed = GNU_TIME.exists()
        if timed:
            command = [str(GNU_TIME), "-f", "%M", "-o", str(report), *command]
        measured = _run(command, env, readable)
        if timed and report.exists():
            last = report.read_text().strip().splitlines()[-1]
            measured = replace(measured, max_rss_mb=int(last) / 1024)
    return measured


def _run(command: list[str], env: dict[str, str] | None, readable: bool) -> Measured:
    start = time.perf_counter()
    child = subprocess.Popen(
        command, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, env=env, text=True
    )
    peak = [0]
    done = threading.Event()

    def sample() -> None:
        while not done.is_set():
            peak[0] = max(peak[0], _tree_pss_kib(child.pid))
            done.wait(0.02)

    sampler = threading.Thread(target=sample, daemon=True)
    if readable:
        sampler.start()
    # wait4's ru_maxrss is the largest of the child and the descendants it waited for.
    _, status, usage = os.wait4(child.pid, 0)
    seconds = time.perf_counter() - start
    done.set()
    if readable:
        sampler.join()
    child.returncode = os.waitstatus_to_exitcode(status)
    if child.returncode != 0 and child.stderr is not None:
        print(child.stderr.read().strip())
    return Measured(
        seconds=seconds,
        returncode=child.returncode,
        max_rss_mb=usage.ru_maxrss / 1024,
        peak_pss_mb=peak[0] / 1024 if readable else None,
    )

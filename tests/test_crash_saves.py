"""Saves of the recoding log survive SIGKILL at any moment: the old log or the new, never half.

A forked child saves revision after revision with ``recodings.save`` and reports each one
that returned; the parent kills it at a random moment, then checks the file on disk. The
soak runs for ``--soak-seconds`` (default 5; also ``BENDWISE_SOAK_SECONDS``). Fixed kill
points (before the data is on disk, before the rename, after it) are tested separately, so
the outcome for each phase is checked whatever the timing of the soak.
"""

from __future__ import annotations

import os
import random
import select
import signal
import time
from dataclasses import replace
from pathlib import Path

import pytest
from recodings_cases import every_kind_log

from tui import atomic
from tui.recodings import RecodingLog, SetAside, dumps, load, save

pytestmark = pytest.mark.skipif(not hasattr(os, "fork"), reason="needs os.fork and SIGKILL")

_POOL = every_kind_log()
MIN_ROUNDS = 30
KILLS_PER_SECOND = 60
"""The soak ends at its time budget or after this many kills per second of it (300 by default)."""


def revision(i: int) -> RecodingLog:
    """Revision ``i`` of an invented log; sizes differ so a cut file cannot pass for another."""
    kept = _POOL.decisions[: 2 + i % 7]
    note = SetAside("record_id", f"identifier, revision {i}", "2026-03-02T09:15:00+00:00")
    return replace(_POOL, decisions=kept, set_aside=(note,))


def leftovers(folder: Path, target: Path) -> list[Path]:
    return sorted(p for p in folder.iterdir() if p != target)


def _pid_of(temp: Path) -> int:
    # .<name>.<host>.<pid>.<random>.tmp
    return int(temp.name.rsplit(".", 3)[1])


def _fork_saver(target: Path, first: int, write_fd: int, read_fd: int) -> int:
    pid = os.fork()
    if pid == 0:  # child: never returns into pytest
        try:
            os.close(read_fd)
            i = first
            while True:
                save(revision(i), target)
                os.write(write_fd, f"{i}\n".encode())
                i += 1
        finally:
            os._exit(1)
    return pid


def _reports(read_fd: int) -> list[int]:
    chunks = []
    while True:
        chunk = os.read(read_fd, 65536)
        if not chunk:
            return [int(line) for line in b"".join(chunks).split()]
        chunks.append(chunk)


def _kill(pid: int) -> None:
    os.kill(pid, signal.SIGKILL)
    _, status = os.waitpid(pid, 0)
    assert os.WIFSIGNALED(status) and os.WTERMSIG(status) == signal.SIGKILL, status


def test_soak_sigkill_during_saves(tmp_path: Path, request: pytest.FixtureRequest) -> None:
    seconds = float(request.config.getoption("--soak-seconds"))
    target = tmp_path / "cohort.recodings.json"
    save(revision(0), target)
    texts: dict[int, str] = {}

    def text(i: int) -> str:
        if i not in texts:
            texts[i] = dumps(revision(i))
        return texts[i]

    # Kill delays start near the time of one save measured here, then follow the children's
    # real pace (slower on a busy machine): longer after a round without a completed save,
    # shorter after one with, so about half the kills land in a first save and half later.
    started = time.perf_counter()
    for i in range(5):
        save(revision(i), target)
    scale = (time.perf_counter() - started) / 5
    save(revision(0), target)

    rng = random.Random(20260302)
    on_disk, rounds, completed, killed_mid_write = 0, 0, 0, 0
    begun = time.monotonic()
    deadline = begun + seconds
    most = KILLS_PER_SECOND * seconds
    while (time.monotonic() < deadline and rounds < most) or rounds < MIN_ROUNDS:
        read_fd, write_fd = os.pipe()
        pid = _fork_saver(target, on_disk + 1, write_fd, read_fd)
        os.close(write_fd)
        time.sleep(rng.uniform(0.0, 2.0 * scale))
        _kill(pid)
        done = _reports(read_fd)
        os.close(read_fd)
        rounds += 1
        completed += len(done)
        scale *= 0.95 if done else 1.05

        before = done[-1] if done else on_disk
        found = target.read_text(encoding="utf-8")
        assert found in (text(before), text(before + 1)), f"round {rounds}: torn log"
        on_disk = before if found == text(before) else before + 1
        assert load(target) == revision(on_disk)

        left = leftovers(tmp_path, target)
        killed_mid_write += bool(left)
        if done:
            # The child's completed save cleared older leftovers; only its own can remain.
            assert len(left) <= 1, left
            assert all(_pid_of(p) == pid for p in left), left

    # A completed save leaves only the log, and clears what killed saves left.
    save(revision(on_disk + 1), target)
    assert leftovers(tmp_path, target) == []
    assert load(target) == revision(on_disk + 1)
    assert completed > 0, "no child finished a single save"
    print(
        f"\nsoak: {rounds} kills in {time.monotonic() - begun:.1f}s, {completed} saves completed, "
        f"{killed_mid_write} kills left a temporary file"
    )


# Where the child stops, and whether the log on disk is then the old one or the new one.
PHASES = [
    ("fsync", "old"),  # data written to the temporary file, not yet on disk
    ("replace", "old"),  # temporary file complete, not yet renamed
    ("_fsync_folder", "new"),  # renamed, rename not yet made durable
]


@pytest.mark.parametrize(("point", "expected"), PHASES, ids=[p for p, _ in PHASES])
def test_kill_at_each_phase(tmp_path: Path, point: str, expected: str) -> None:
    target = tmp_path / "cohort.recodings.json"
    old, new = revision(1), revision(2)
    save(old, target)
    read_fd, write_fd = os.pipe()
    pid = os.fork()
    if pid == 0:
        try:
            os.close(read_fd)

            def stop_here(*args: object, **kwargs: object) -> None:
                os.write(write_fd, b"stopped\n")
                time.sleep(600)

            holder = atomic if point == "_fsync_folder" else os
            setattr(holder, point, stop_here)
            save(new, target)
        finally:
            os._exit(1)
    os.close(write_fd)
    ready, _, _ = select.select([read_fd], [], [], 120)
    assert ready, "child never reached the kill point"
    assert os.read(read_fd, 100) == b"stopped\n"
    _kill(pid)
    os.close(read_fd)

    assert load(target) == (old if expected == "old" else new)
    left = leftovers(tmp_path, target)
    if expected == "old":
        assert [_pid_of(p) for p in left] == [pid]
        if point == "replace":  # the whole new text was in the temporary file
            assert left[0].read_text(encoding="utf-8") == dumps(new)
    else:
        assert left == []

    save(revision(3), target)
    assert leftovers(tmp_path, target) == []
    assert load(target) == revision(3)

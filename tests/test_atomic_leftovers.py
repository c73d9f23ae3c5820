"""Temporary files left by killed writes are removed by the next write, and only those."""

from __future__ import annotations

import os
import time
from pathlib import Path

import pytest

from tui import atomic
from tui.atomic import STALE_SECONDS, atomic_write_text, remove_leftovers

TARGET = "cohort.recodings.json"


def _dead_pid() -> int:
    pid = os.fork()
    if pid == 0:
        os._exit(0)
    os.waitpid(pid, 0)  # reaped: no such process any more
    return pid


def _temp(folder: Path, host: str, pid: int, random: str = "abcd_123", age: float = 0.0) -> Path:
    path = folder / f".{TARGET}.{host}.{pid}.{random}.tmp"
    path.write_text("half a log")
    if age:
        stamp = time.time() - age
        os.utime(path, (stamp, stamp))
    return path


def test_a_completed_write_leaves_only_the_file(tmp_path: Path) -> None:
    target = tmp_path / TARGET
    for text in ("one\n", "two\n", "three\n"):
        atomic_write_text(target, text)
    assert [p.name for p in tmp_path.iterdir()] == [TARGET]
    assert target.read_text() == "three\n"


def test_temporary_name_tells_host_and_process(tmp_path: Path, monkeypatch) -> None:
    seen = []
    real = os.replace

    def spy(src, dst):
        seen.append(Path(src).name)
        real(src, dst)

    monkeypatch.setattr(os, "replace", spy)
    atomic_write_text(tmp_path / TARGET, "x\n")
    prefix = f".{TARGET}.{atomic._host_tag()}.{os.getpid()}."
    assert seen[0].startswith(prefix) and seen[0].endswith(".tmp")


@pytest.mark.skipif(not hasattr(os, "fork"), reason="needs os.fork")
def test_which_leftovers_go(tmp_path: Path) -> None:
    here = atomic._host_tag()
    elsewhere = "0" * 8 if here != "0" * 8 else "1" * 8
    dead = _temp(tmp_path, here, _dead_pid())
    mine = _temp(tmp_path, here, os.getpid())
    alive = _temp(tmp_path, here, os.getppid(), "live_one")
    remote = _temp(tmp_path, elsewhere, 4242)
    remote_old = _temp(tmp_path, elsewhere, 4242, "old_1234", age=STALE_SECONDS + 60)
    older_naming = tmp_path / f".{TARGET}.k3j_x9q2.tmp"
    older_naming.write_text("from an older bendwise")
    os.utime(older_naming, (time.time() - STALE_SECONDS - 60,) * 2)
    unrelated = [
        tmp_path / f".other.json.{here}.1.abcdefgh.tmp",
        tmp_path / "notes.tmp",
        tmp_path / f".{TARGET}.{here}.1.abcdefgh.tmp.keep",
    ]
    for path in unrelated:
        path.write_text("not ours")
    folder_like = tmp_path / f".{TARGET}.{here}.{_dead_pid()}.dir_1234.tmp"
    folder_like.mkdir()

    atomic_write_text(tmp_path / TARGET, "new\n")

    gone = {dead, remote_old, older_naming}
    kept = {mine, alive, remote, folder_like, *unrelated}
    assert all(not p.exists() for p in gone)
    assert all(p.exists() for p in kept)
    assert remove_leftovers(tmp_path / TARGET) == []


def test_long_target_names_still_write(tmp_path: Path) -> None:
    target = tmp_path / ("w" * 240 + ".json")
    atomic_write_text(target, "ok\n")
    assert target.read_text() == "ok\n"
    assert [p.name for p in tmp_path.iterdir()] == [target.name]


def test_unreadable_folder_listing_is_not_an_error(tmp_path: Path, monkeypatch) -> None:
    def refuse(*args, **kwargs):
        raise PermissionError("no listing")

    monkeypatch.setattr(os, "scandir", refuse)
    atomic_write_text(tmp_path / TARGET, "fine\n")
    assert (tmp_path / TARGET).read_text() == "fine\n"

"""Atomic writes keep the usual file mode and never leave a half-written file."""

import os
import stat

import pytest

from tui.atomic import atomic_write_text


def test_new_file_gets_the_umask_mode(tmp_path):
    old = os.umask(0o022)
    try:
        target = tmp_path / "out.txt"
        atomic_write_text(target, "hello\n")
        assert stat.S_IMODE(target.stat().st_mode) == 0o644
    finally:
        os.umask(old)


def test_existing_file_keeps_its_mode(tmp_path):
    target = tmp_path / "out.txt"
    target.write_text("old\n")
    target.chmod(0o640)
    atomic_write_text(target, "new\n")
    assert stat.S_IMODE(target.stat().st_mode) == 0o640
    assert target.read_text() == "new\n"


def test_failed_rename_keeps_the_old_file(tmp_path, monkeypatch):
    target = tmp_path / "out.txt"
    target.write_text("old\n")

    def broken(*args, **kwargs):
        raise OSError("disk gone")

    monkeypatch.setattr(os, "replace", broken)
    with pytest.raises(OSError):
        atomic_write_text(target, "new\n")
    assert target.read_text() == "old\n"
    assert [p.name for p in tmp_path.iterdir()] == ["out.txt"]

"""The checks every writer makes before it writes (would this overwrite an input? may
it replace that file? can it be written there?) and the one way refusals are worded."""

from __future__ import annotations

import os
from collections.abc import Sequence
from pathlib import Path

from tui.atomic import atomic_write_bytes
from tui.problems import InputProblem


def same_file(a: str | os.PathLike[str], b: str | os.PathLike[str]) -> bool:
    """``a`` and ``b`` name the same file: the same path once resolved (whether or not it
    exists yet), or two existing paths to one file (a hard link, a second mount)."""
    first, second = Path(a), Path(b)
    if first.resolve() == second.resolve():
        return True
    try:
        return first.exists() and second.exists() and os.path.samefile(first, second)
    except OSError:
        return False


def check_output(
    path: str | os.PathLike[str],
    inputs: Sequence[tuple[str, str | os.PathLike[str]]],
    force: bool,
    option: str = "--output",
) -> Path:
    """The rule every command that writes a file follows, checked before its first byte:
    never over an input (``inputs`` pairs a description with a path, e.g. ``("data
    file", path)``), never over an existing file without ``--force``, and only into a
    folder that exists and may be written. Raises InputProblem with one line."""
    target = Path(path)
    for what, source in inputs:
        if same_file(target, source):
            raise InputProblem(
                f"{option} {target} is the {what}; bendwise never overwrites an input"
            )
    if target.is_dir():
        raise InputProblem(f"cannot write {target}: it is a directory")
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise InputProblem(f"cannot write {target}: folder {folder} does not exist")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise InputProblem(f"cannot write {target}: folder {folder} is not writable")
    if (target.exists() or target.is_symlink()) and not force:
        raise InputProblem(f"cannot write {target}: it exists; add --force to replace it")
    return target


def write_refused(path: str | os.PathLike[str], error: OSError) -> InputProblem:
    """The one-line message for a write the system refused (full disk, permissions...)."""
    return InputProblem(f"cannot write {Path(path)}: {error.strerror or error}")


def write_output(path: str | os.PathLike[str], data: str | bytes) -> None:
    """Write ``data`` atomically (text as UTF-8); a refusal of the system (a full disk, a
    folder without write permission) raises InputProblem and leaves any old file intact."""
    payload = data.encode("utf-8") if isinstance(data, str) else data
    try:
        atomic_write_bytes(path, payload)
    except OSError as error:
        raise write_refused(path, error) from None

"""Write a file so that a crash leaves either the old version or the new one, never half.

The new bytes go to a temporary file beside the target, named
``.<target>.<host>.<pid>.<random>.tmp``, which is renamed over the target once it is on
disk. A process killed mid-write leaves its temporary file behind; the next successful
write of the same target removes it once its writer is known to be gone (same host, no
such process) or it is older than a day (another host's, or an older naming).
"""

from __future__ import annotations

import hashlib
import os
import re
import socket
import tempfile
import time
from pathlib import Path

STALE_SECONDS = 24 * 3600.0
"""A temporary file this old belongs to no write still running, whoever made it."""

# Long target names are cut in the temporary name so that it stays a legal file name.
_STEM_CHARS = 100
# mkstemp's random part: 8 of a-z, 0-9 and '_'.
_RANDOM = r"[a-z0-9_]{8}"


def atomic_write_bytes(path: str | os.PathLike[str], data: bytes) -> None:
    """Write to a temporary file in the same folder, fsync it, then rename over ``path``."""
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    prefix = f".{_stem(target)}.{_host_tag()}.{os.getpid()}."
    fd, tmp = tempfile.mkstemp(prefix=prefix, suffix=".tmp", dir=folder)
    try:
        # mkstemp makes the file private (0600); give it the mode a plain write would have
        # (the old file's, or 0666 less the umask) so colleagues and scoring jobs can read it.
        os.chmod(tmp, _mode_for(target))
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        os.replace(tmp, target)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    _fsync_folder(folder)
    remove_leftovers(target)


def atomic_write_text(path: str | os.PathLike[str], text: str) -> None:
    """UTF-8 text version of ``atomic_write_bytes``."""
    atomic_write_bytes(path, text.encode("utf-8"))


def remove_leftovers(path: str | os.PathLike[str], now: float | None = None) -> list[Path]:
    """Delete temporary files that killed writes of ``path`` left; returns those removed.

    Removed: files of a process on this host that no longer exists, and any older than
    ``STALE_SECONDS``. Files of this process and of live writers stay. Best effort: a file
    that cannot be inspected or removed is left alone.
    """
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    stem = _stem(target)
    start = f".{stem}."
    pattern = re.compile(
        rf"\.{re.escape(stem)}\.(?:(?P<host>[0-9a-f]{{8}})\.(?P<pid>\d+)\.)?{_RANDOM}\.tmp"
    )
    now = time.time() if now is None else now
    removed = []
    try:
        entries = [e for e in os.scandir(folder) if e.name.startswith(start)]
    except OSError:
        return removed
    for entry in entries:
        found = pattern.fullmatch(entry.name)
        if found is None:
            continue
        try:
            if not entry.is_file(follow_symlinks=False):
                continue
            stale = now - entry.stat(follow_symlinks=False).st_mtime > STALE_SECONDS
            if stale or _writer_gone(found["host"], found["pid"]):
                os.unlink(entry.path)
                removed.append(Path(entry.path))
        except OSError:
            continue
    return removed


def _writer_gone(host: str | None, pid: str | None) -> bool:
    """Whether the process named in a temporary file's name has certainly ended."""
    if host != _host_tag() or pid is None or int(pid) == os.getpid():
        return False
    if os.name != "posix":  # os.kill(pid, 0) is only a harmless probe on POSIX
        return False
    try:
        os.kill(int(pid), 0)
    except ProcessLookupError:
        return True
    except (PermissionError, OverflowError, OSError):
        return False
    return False


def _stem(target: Path) -> str:
    return target.name[:_STEM_CHARS]


def _host_tag() -> str:
    return hashlib.sha256(socket.gethostname().encode("utf-8", "replace")).hexdigest()[:8]


def _fsync_folder(folder: Path) -> None:
    """Make the rename itself durable (not possible on every system; then skipped)."""
    try:
        dir_fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(dir_fd)
    except OSError:
        pass
    finally:
        os.close(dir_fd)


def _mode_for(target: Path) -> int:
    try:
        return target.stat().st_mode & 0o7777
    except OSError:
        umask = os.umask(0)
        os.umask(umask)
        return 0o666 & ~umask

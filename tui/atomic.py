"""Write a file so that a crash leaves either the old version or the new one, never half."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path


def atomic_write_bytes(path: str | os.PathLike[str], data: bytes) -> None:
    """Write to a temporary file in the same folder, fsync it, then rename over ``path``."""
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=folder)
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
    try:  # make the rename itself durable
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


def atomic_write_text(path: str | os.PathLike[str], text: str) -> None:
    """UTF-8 text version of ``atomic_write_bytes``."""
    atomic_write_bytes(path, text.encode("utf-8"))

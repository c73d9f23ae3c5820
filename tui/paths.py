"""The one check every writer makes before it writes: would this overwrite an input?"""

from __future__ import annotations

import os
from pathlib import Path


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

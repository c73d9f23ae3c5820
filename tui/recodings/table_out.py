"""Write a replayed table in the format its file name asks for, atomically."""

from __future__ import annotations

import io
import os
from collections.abc import Callable
from pathlib import Path

import pandas as pd

from tui.paths import check_output, write_output
from tui.problems import InputProblem


def _csv(frame: pd.DataFrame, sep: str) -> bytes:
    # Python's float repr round-trips, so written numbers read back as the same doubles.
    return frame.to_csv(index=False, sep=sep, lineterminator="\n").encode("utf-8")


def _parquet(frame: pd.DataFrame) -> bytes:
    buffer = io.BytesIO()
    frame.to_parquet(buffer, index=False)
    return buffer.getvalue()


def _feather(frame: pd.DataFrame) -> bytes:
    buffer = io.BytesIO()
    frame.reset_index(drop=True).to_feather(buffer)
    return buffer.getvalue()


WRITERS: dict[str, Callable[[pd.DataFrame], bytes]] = {
    ".csv": lambda frame: _csv(frame, ","),
    ".tsv": lambda frame: _csv(frame, "\t"),
    ".parquet": _parquet,
    ".feather": _feather,
}
"""Output formats by file extension (compared case-insensitively)."""


def check_writable(path: str | os.PathLike[str]) -> Path:
    """The output path, after checking its extension and folder; raises InputProblem."""
    target = Path(path)
    ext = target.suffix.lower()
    if ext not in WRITERS:
        what = f"type '{ext}'" if ext else "no file extension"
        raise InputProblem(
            f"cannot write {target}: {what}; output formats: {', '.join(sorted(WRITERS))}"
        )
    return check_output(target, (), force=True)  # the folder; replacing is the caller's call


def write_table(frame: pd.DataFrame, path: str | os.PathLike[str]) -> None:
    """Write ``frame`` to ``path`` (format by extension); the old file survives any failure."""
    target = check_writable(path)
    try:
        data = WRITERS[target.suffix.lower()](frame)
    except (ValueError, TypeError) as exc:  # e.g. a column type the format cannot hold
        raise InputProblem(f"cannot write {target}: {exc}") from None
    write_output(target, data)

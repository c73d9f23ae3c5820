"""A data file opened for scanning: outcome coded, columns profiled, values on demand."""

from __future__ import annotations

import hashlib
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from tui.intake.outcome import CodedOutcome, code_outcome
from tui.intake.profile import ColumnProfile, numeric_values, profile_frame
from tui.intake.readers import read_table


@dataclass(frozen=True)
class Dataset:
    """The rows with an outcome, and what is known of each column."""

    path: Path
    """The file read (never modified)."""
    frame: pd.DataFrame
    """Rows with a present outcome."""
    outcome: CodedOutcome
    """The coded outcome for those rows."""
    numeric: tuple[ColumnProfile, ...]
    """Numeric columns to scan (outcome and excluded columns left out)."""
    skipped: tuple[ColumnProfile, ...]
    """Non-numeric columns, listed, not scanned."""
    excluded: tuple[str, ...]
    """Columns left out on request."""

    @property
    def columns(self) -> list[str]:
        """Names of the numeric columns to scan."""
        return [p.name for p in self.numeric]

    def values(self, column: str) -> np.ndarray:
        """Float values of one column for the kept rows (NaN for missing or ±inf)."""
        return numeric_values(self.frame[column])

    def raw_values(self, column: str) -> np.ndarray:
        """Float values with ±inf kept (the engine counts them as non-finite)."""
        series = self.frame[column]
        if series.dtype == bool:
            series = series.astype(float)
        return pd.to_numeric(series, errors="coerce").to_numpy(dtype=float, na_value=np.nan)


def open_dataset(
    path: str | Path, outcome: str, event: str | None = None, exclude: Sequence[str] = ()
) -> Dataset:
    """Read a file, code its outcome (dropping rows where it is missing) and profile it."""
    path = Path(path)
    frame = read_table(path)
    coded = code_outcome(frame, outcome, event)
    kept = frame.loc[coded.keep].reset_index(drop=True)
    numeric, skipped = profile_frame(kept, outcome, exclude)
    return Dataset(path, kept, coded, tuple(numeric), tuple(skipped), tuple(exclude))


def file_sha256(path: str | Path) -> str:
    """SHA-256 of a file's bytes, read in blocks."""
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()

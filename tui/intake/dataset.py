"""A data file opened for scanning: outcome coded, columns profiled, values on demand.

Parquet and Feather files store each column apart, so they are opened one column at a
time (``ColumnarDataset``): the outcome is read once, then each column when it is asked
for, and memory stays near one column plus the outcome however wide the file. Other
formats are read whole (``Dataset``). A Parquet file's outcome, profiles and numbers come
from pyarrow arrays, so a scan of one never imports pandas; text covariates, weights and
stored types other than numbers, booleans and text still go through pandas.
"""

from __future__ import annotations

import functools
import hashlib
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from tui.intake import arrow_columns
from tui.intake.outcome import CodedOutcome, check_outcome_name, code_outcome, code_outcome_arrow
from tui.intake.profile import (
    ColumnProfile,
    check_profile_names,
    numeric_values,
    profile_column,
    profile_floats,
    profile_frame,
    profile_text_arrow,
)
from tui.intake.readers import (
    list_columns,
    read_arrow,
    read_column,
    read_floats,
    read_floats_many,
    read_table,
)
from tui.names import shown_name
from tui.problems import InputProblem

if TYPE_CHECKING:
    import pandas as pd

COLUMNAR = frozenset({".parquet", ".feather"})
"""Extensions opened one column at a time."""


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

    @property
    def column_names(self) -> list[str]:
        """Every column of the file, in file order."""
        return [str(name) for name in self.frame.columns]

    @property
    def rows(self) -> int:
        """Rows with a present outcome."""
        return len(self.frame)

    def values(self, column: str) -> np.ndarray:
        """Float values of one column for the kept rows (NaN for missing or ±inf)."""
        return numeric_values(self.frame[column])

    def series(self, column: str) -> pd.Series:
        """One column as stored, for the kept rows (text covariates, weights)."""
        return self.frame[column]

    def raw_values(self, column: str) -> np.ndarray:
        """Float values with ±inf kept (the engine counts them as non-finite)."""
        return _raw_floats(self.frame[column])

    def raw_values_many(self, columns: Sequence[str]) -> list[np.ndarray]:
        """``raw_values`` of several columns."""
        return [self.raw_values(column) for column in columns]

    def present(self, column: str) -> np.ndarray:
        """Where one column holds a value, over the kept rows."""
        return self.frame[column].notna().to_numpy()


def _raw_floats(series: pd.Series) -> np.ndarray:
    import pandas as pd

    if series.dtype == bool:
        series = series.astype(float)
    return pd.to_numeric(series, errors="coerce").to_numpy(dtype=float, na_value=np.nan)


class ColumnarDataset:
    """A Parquet or Feather file opened one column at a time.

    Offers what ``Dataset`` offers. Opening reads the schema and the outcome; a column's
    values are read from the file each time they are asked for, and only the kept rows are
    returned. ``numeric`` profiles read every numeric column once, when first asked for;
    ``frame`` reads the whole file, when first asked for, and keeps it.
    """

    def __init__(
        self,
        path: Path,
        outcome: CodedOutcome,
        numeric_names: Sequence[str],
        skipped: Sequence[ColumnProfile],
        excluded: Sequence[str],
        column_names: Sequence[str],
        stored: dict[str, Any] | None = None,
        written: dict[str, str] | None = None,
    ) -> None:
        self.path = path
        """The file read (never modified)."""
        self.outcome = outcome
        """The coded outcome for the rows that have it."""
        self.skipped = tuple(skipped)
        """Non-numeric columns, listed, not scanned."""
        self.excluded = tuple(excluded)
        """Columns left out on request."""
        self._numeric_names = list(numeric_names)
        self._column_names = list(column_names)
        self._stored = stored or {}
        self._written = written or {}  # dtypes the file's pandas metadata records

    @property
    def columns(self) -> list[str]:
        """Names of the numeric columns to scan (from the file's schema, nothing read)."""
        return list(self._numeric_names)

    @property
    def column_names(self) -> list[str]:
        """Every column of the file, in file order."""
        return list(self._column_names)

    @property
    def rows(self) -> int:
        """Rows with a present outcome."""
        return int(self.outcome.y.size)

    @functools.cached_property
    def numeric(self) -> tuple[ColumnProfile, ...]:
        """Profiles of the numeric columns (reads each of them once, one at a time)."""
        return tuple(self._profile(name) for name in self._numeric_names)

    def _profile(self, name: str) -> ColumnProfile:
        floats = read_floats(self.path, name)  # Parquet numbers: profiled without pandas
        stored = self._stored.get(name)
        if floats is None or stored is None:
            return profile_column(self._kept(name), name)
        # Nulls anywhere in the file's column decide its dtype, as when pandas reads it.
        gaps = bool(np.isnan(floats).any())
        dtype = arrow_columns.dtype_named(stored, gaps, self._written.get(name))
        keep = self.outcome.keep
        return profile_floats(floats if keep.all() else floats[keep], name, dtype)

    @functools.cached_property
    def frame(self) -> pd.DataFrame:
        """Every column for the rows with an outcome: reads the whole file into memory."""
        return read_table(self.path).loc[self.outcome.keep].reset_index(drop=True)

    def values(self, column: str) -> np.ndarray:
        """Float values of one column for the kept rows (NaN for missing or ±inf)."""
        floats = self.stored_floats(column)
        return numeric_values(self._kept(column)) if floats is None else floats

    def stored_floats(self, column: str) -> np.ndarray | None:
        """``values`` of a column stored as numbers in Parquet, read without pandas; None
        for any other column (the caller then reads it with ``series``)."""
        floats = read_floats(self.path, column)
        if floats is None:
            return None
        floats = floats[self.outcome.keep]  # a copy: the caller may change it
        floats[np.isinf(floats)] = np.nan
        return floats

    def raw_values(self, column: str) -> np.ndarray:
        """Float values with ±inf kept (the engine counts them as non-finite)."""
        floats = read_floats(self.path, column)  # numbers stored in Parquet: no DataFrame
        if floats is None:
            return _raw_floats(self._kept(column))
        keep = self.outcome.keep
        return floats if keep.all() else floats[keep]

    def raw_values_many(self, columns: Sequence[str]) -> list[np.ndarray]:
        """``raw_values`` of several columns, numbers stored in Parquet read in one call."""
        keep = self.outcome.keep
        every = keep.all()
        out = []
        for column, floats in zip(columns, read_floats_many(self.path, columns), strict=True):
            if floats is None:
                out.append(_raw_floats(self._kept(column)))
            else:
                out.append(floats if every else floats[keep])
        return out

    def series(self, column: str) -> pd.Series:
        """One column as stored, for the kept rows (text covariates, weights)."""
        return self._kept(column)

    def present(self, column: str) -> np.ndarray:
        """Where one column holds a value, over the kept rows."""
        array = read_arrow(self.path, column)
        if array is None or arrow_columns.kind_of(array) is None:
            return self._kept(column).notna().to_numpy()
        return arrow_columns.present(array)[self.outcome.keep]

    def _kept(self, column: str) -> pd.Series:
        series = read_column(self.path, column)
        keep = self.outcome.keep
        if keep.all():
            return series
        return series[keep].reset_index(drop=True)


def open_dataset(
    path: str | Path, outcome: str, event: str | None = None, exclude: Sequence[str] = ()
) -> Dataset | ColumnarDataset:
    """Open a file, code its outcome (dropping rows where it is missing) and profile it.

    Parquet and Feather files are opened one column at a time (``ColumnarDataset``);
    other formats are read whole (``Dataset``).
    """
    path = Path(path)
    if path.suffix.lower() in COLUMNAR:
        return open_columnar(path, outcome, event, exclude)
    return open_whole(path, outcome, event, exclude)


def require_numeric(data: Dataset | ColumnarDataset, also_not: str | None = None) -> None:
    """Raise InputProblem when no numeric column is left to scan (besides the outcome
    and the column ``also_not``, e.g. the weight); the message lists the columns found,
    text columns as such."""
    if [c for c in data.columns if c != also_not]:
        return
    found = [f"{shown_name(p.name)} (text)" for p in data.skipped]
    found += [f"{shown_name(c)} (excluded)" for c in data.excluded]
    if also_not in data.columns:
        found.append(f"{shown_name(also_not)} (the weight)")
    listed = ", ".join(found[:_LISTED]) + (
        f" and {len(found) - _LISTED} more" if len(found) > _LISTED else ""
    )
    outcome = shown_name(data.outcome.column)
    raise InputProblem(
        f"{data.path.name} has no numeric column to scan besides the outcome {outcome}; "
        f"columns found: {listed or 'none'}"
    )


_LISTED = 20  # columns a message names; the rest are counted


def open_whole(
    path: str | Path, outcome: str, event: str | None = None, exclude: Sequence[str] = ()
) -> Dataset:
    """Read the whole file, code its outcome and profile every column."""
    path = Path(path)
    frame = read_table(path)
    coded = code_outcome(frame, outcome, event)
    kept = frame.loc[coded.keep].reset_index(drop=True)
    numeric, skipped = profile_frame(kept, outcome, exclude)
    return Dataset(path, kept, coded, tuple(numeric), tuple(skipped), tuple(exclude))


def open_columnar(
    path: str | Path, outcome: str, event: str | None = None, exclude: Sequence[str] = ()
) -> ColumnarDataset:
    """Open a Parquet or Feather file one column at a time.

    Reads the schema and the outcome column; columns whose stored type is a number or a
    boolean count as numeric without being read. Any other column is read once to
    profile it, so it is judged numeric or not exactly as when the whole file is read.
    """
    path = Path(path)
    names = list_columns(path)
    check_outcome_name(outcome, names)  # the same messages as a whole read
    coded = _code_columnar(path, outcome, event)
    check_profile_names(names, outcome, exclude)  # names repeated or excluded names unknown
    stored, written = _stored_types(path)
    numeric: list[str] = []
    skipped: list[ColumnProfile] = []
    for name in names:
        if name == outcome or name in exclude:
            continue
        if _numeric_type(stored.get(name)):
            numeric.append(name)
            continue
        profile = _profile_stored(path, name, coded.keep)
        if profile.numeric:
            numeric.append(name)
        else:
            skipped.append(profile)
    return ColumnarDataset(path, coded, numeric, skipped, exclude, names, stored, written)


def _code_columnar(path: Path, outcome: str, event: str | None) -> CodedOutcome:
    """The outcome coded from the pyarrow column when its stored type allows, else as
    pandas reads it."""
    array = read_arrow(path, outcome)
    coded = None if array is None else code_outcome_arrow(outcome, array, event)
    if coded is None:
        coded = code_outcome(read_column(path, outcome).to_frame(outcome), outcome, event)
    return coded


def _profile_stored(path: Path, name: str, keep: np.ndarray) -> ColumnProfile:
    """Profile of a column whose stored type is not a number: text from the pyarrow
    column, anything else (or any Feather column) as pandas reads it."""
    array = read_arrow(path, name)
    profile = None if array is None else profile_text_arrow(array, keep, name)
    if profile is None:
        series = read_column(path, name)
        profile = profile_column(series[keep].reset_index(drop=True), name)
    return profile


def _stored_types(path: Path) -> tuple[dict[str, Any], dict[str, str]]:
    """Arrow type of each column as stored, and the dtypes the file's pandas metadata
    records; empty when the schema cannot say cheaply (every column is then read once to
    profile it)."""
    import pyarrow as pa

    try:
        if path.suffix.lower() == ".parquet":
            import pyarrow.parquet as pq

            schema = pq.read_schema(path)
        else:
            with pa.memory_map(str(path), "r") as source:
                schema = pa.ipc.open_file(source).schema
    except (OSError, pa.ArrowException):
        return {}, {}
    return {field.name: field.type for field in schema}, arrow_columns.written_dtypes(schema)


def _numeric_type(arrow_type: Any) -> bool:
    """Integer, floating-point and boolean columns come back numeric from every reader."""
    if arrow_type is None:
        return False
    import pyarrow as pa

    return bool(
        pa.types.is_integer(arrow_type)
        or pa.types.is_floating(arrow_type)
        or pa.types.is_boolean(arrow_type)
    )


def file_sha256(path: str | Path) -> str:
    """SHA-256 of a file's bytes, read in blocks."""
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()

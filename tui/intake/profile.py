"""Describe each column before a scan: numeric or not, how much is missing, the value range.

Profiles describe the rows a scan will use. Callers pass the frame already filtered to the
rows where the outcome is present (``df[coded.keep]``), so counts match the fitted data.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from tui.intake import arrow_columns
from tui.names import closest_names
from tui.problems import InputProblem

if TYPE_CHECKING:
    import pandas as pd


@dataclass(frozen=True)
class ColumnProfile:
    """What a scan needs to know about one column."""

    name: str
    """Column name."""
    numeric: bool
    """True when the column holds numbers or booleans (booleans count as 0/1)."""
    dtype: str
    """The pandas dtype, as text."""
    rows: int
    """Rows considered (those with the outcome present)."""
    n: int
    """Finite, non-missing values."""
    missing: int
    """Missing values, counting non-finite ones (rows - n)."""
    nonfinite: int
    """Values of +inf or -inf; they are treated as missing."""
    distinct: int
    """Distinct finite values (distinct non-missing values for non-numeric columns)."""
    minimum: float | None
    """Smallest finite value; None when there is none or the column is not numeric."""
    maximum: float | None
    """Largest finite value; None when there is none or the column is not numeric."""
    integer_valued: bool
    """True when there is at least one finite value and all are whole numbers."""


def is_numeric_column(series: pd.Series) -> bool:
    """Whether the column counts as numeric: real numbers or booleans, not text or dates."""
    from pandas.api.types import is_bool_dtype, is_complex_dtype, is_numeric_dtype

    dtype = series.dtype
    return bool(is_bool_dtype(dtype) or (is_numeric_dtype(dtype) and not is_complex_dtype(dtype)))


def numeric_values(series: pd.Series) -> np.ndarray:
    """The column as float64, with missing values and +/-inf as NaN.

    Booleans become 0.0/1.0; nullable integer, float and boolean dtypes are handled.
    Raises ``InputProblem`` for a column that is not numeric.
    """
    values = _as_float(series)
    values[np.isinf(values)] = np.nan
    return values


def profile_column(series: pd.Series, name: str) -> ColumnProfile:
    """Profile one column (the rows given are the rows considered)."""
    rows = len(series)
    dtype = str(series.dtype)
    if not is_numeric_column(series):
        present = series.dropna()
        return ColumnProfile(
            name=name,
            numeric=False,
            dtype=dtype,
            rows=rows,
            n=len(present),
            missing=rows - len(present),
            nonfinite=0,
            distinct=int(present.nunique()),
            minimum=None,
            maximum=None,
            integer_valued=False,
        )
    return profile_floats(_as_float(series), name, dtype)


def profile_floats(values: np.ndarray, name: str, dtype: str) -> ColumnProfile:
    """Profile a numeric column given as float64 (missing: NaN; ±inf kept), e.g. from
    ``readers.read_floats``; ``dtype`` is the column's dtype as pandas names it."""
    rows = len(values)
    nonfinite = int(np.isinf(values).sum())
    finite = values[np.isfinite(values)]
    n = len(finite)
    return ColumnProfile(
        name=name,
        numeric=True,
        dtype=dtype,
        rows=rows,
        n=n,
        missing=rows - n,
        nonfinite=nonfinite,
        distinct=len(np.unique(finite)),
        minimum=float(finite.min()) if n else None,
        maximum=float(finite.max()) if n else None,
        integer_valued=bool(n and np.all(finite == np.floor(finite))),
    )


def profile_text_arrow(array: Any, keep: np.ndarray, name: str) -> ColumnProfile | None:
    """``profile_column`` of the kept rows of a Parquet text column read by pyarrow; None
    for a stored type this does not judge without pandas (numbers have ``profile_floats``)."""
    if arrow_columns.kind_of(array) != arrow_columns.TEXT:
        return None
    rows = int(keep.sum())
    present = arrow_columns.present(array) & keep
    n = int(present.sum())
    values = arrow_columns.kept_values(array, present)
    return ColumnProfile(
        name=name,
        numeric=False,
        dtype=arrow_columns.dtype_named(array.type, bool(array.null_count)),
        rows=rows,
        n=n,
        missing=rows - n,
        nonfinite=0,
        distinct=len(arrow_columns.distinct(values)),
        minimum=None,
        maximum=None,
        integer_valued=False,
    )


def check_profile_names(names: Sequence[str], outcome: str, exclude: Sequence[str] = ()) -> None:
    """The name checks of ``profile_frame``: outcome present, no name repeated, every
    excluded name a column."""
    names = list(names)
    if outcome not in names:
        raise InputProblem(f"outcome column '{outcome}' not found")
    repeated = sorted({name for name in names if names.count(name) > 1})
    if repeated:
        shown = ", ".join(f"'{name}'" for name in repeated)
        raise InputProblem(f"column names appear more than once: {shown}")
    unknown = [name for name in dict.fromkeys(exclude) if name not in names]
    if unknown:
        raise InputProblem(f"excluded columns not found: {_with_hints(unknown, names)}")


def profile_frame(
    df: pd.DataFrame, outcome: str, exclude: Sequence[str] = ()
) -> tuple[list[ColumnProfile], list[ColumnProfile]]:
    """Profile every column except ``outcome`` and ``exclude``, in file order.

    Returns (numeric columns to scan, non-numeric columns skipped); nothing is dropped
    silently. ``df`` must already be filtered to the rows where the outcome is present.
    Raises ``InputProblem`` for an absent outcome, excluded names that are not columns, or
    column names that appear more than once.
    """
    names = [str(name) for name in df.columns]
    check_profile_names(names, outcome, exclude)
    skip = {outcome, *exclude}
    scan: list[ColumnProfile] = []
    skipped: list[ColumnProfile] = []
    for position, name in enumerate(names):
        if name in skip:
            continue
        profile = profile_column(df.iloc[:, position], name)
        (scan if profile.numeric else skipped).append(profile)
    return scan, skipped


def _as_float(series: pd.Series) -> np.ndarray:
    """A writable float64 copy of a numeric column with missing values as NaN."""
    if not is_numeric_column(series):
        raise InputProblem(f"column '{series.name}' is not numeric (dtype {series.dtype})")
    # to_numpy with na_value covers numpy dtypes and the nullable Int/Float/boolean ones alike.
    return series.to_numpy(dtype="float64", na_value=np.nan, copy=True)


def _with_hints(unknown: list[str], names: list[str]) -> str:
    parts = []
    for name in unknown:
        near = closest_names(name, names, limit=1)
        parts.append(f"'{name}' (closest: {near[0]})" if near else f"'{name}'")
    return ", ".join(parts)

"""Parquet columns judged from pyarrow arrays, without pandas.

A scan of a Parquet file needs, per column, what pandas would make of it after
``readers._tidy``: which rows hold a value, the distinct values, numbers as floats. For
the stored types a scan meets (integers, floats, booleans and text) that is worked out
here from the array itself, with the same rules: integers with gaps and floats' NaN count
as missing, booleans with gaps stay booleans, blank text is missing. Any other stored type
(dates, decimals, dictionaries, ...) returns None and the caller goes through pandas.

pyarrow loads pandas the first time an array is turned into numpy (``to_numpy``) or a
Python value into an Arrow scalar, so values here are taken from the arrays' buffers
and compared by position, never through those calls.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

NUMBER, BOOLEAN, TEXT = "number", "boolean", "text"


def kind_of(array: Any) -> str | None:
    """``number``, ``boolean`` or ``text`` for the stored types handled here, else None."""
    import pyarrow as pa

    kind = array.type
    if pa.types.is_integer(kind) or pa.types.is_floating(kind):
        return NUMBER
    if pa.types.is_boolean(kind):
        return BOOLEAN
    if pa.types.is_string(kind) or pa.types.is_large_string(kind):
        return TEXT
    return None


def dtype_named(kind: Any, gaps: bool, written_as: str | None = None) -> str:
    """The dtype pandas gives a column stored as ``kind``, with or without nulls;
    ``written_as``: the dtype the file's pandas metadata records for it, which pandas
    restores when it is one of its own (nullable) types such as ``Int64`` or ``boolean``."""
    import pyarrow as pa

    if written_as is not None and not _numpy_dtype(written_as):
        return written_as
    if pa.types.is_string(kind) or pa.types.is_large_string(kind):
        return "str"
    if pa.types.is_boolean(kind):
        return "boolean" if gaps else "bool"
    if gaps and pa.types.is_integer(kind):
        return "float64"  # integers with gaps come back as floats
    return str(kind.to_pandas_dtype().__name__)


def _numpy_dtype(name: str) -> bool:
    try:
        np.dtype(name)
    except TypeError:
        return False
    return True


def written_dtypes(schema: Any) -> dict[str, str]:
    """Each column's dtype as the file's pandas metadata records it (none without it)."""
    try:
        meta = schema.pandas_metadata or {}
    except ValueError:  # metadata that is not JSON: as if there were none
        return {}
    return {
        str(c.get("name")): str(c["numpy_type"])
        for c in meta.get("columns", [])
        if c.get("numpy_type") is not None
    }


def floats(array: Any) -> np.ndarray:
    """A column of numbers or booleans as a writable float64 array, nulls as NaN (±inf
    and NaN kept; whole numbers past 2**53 round as pandas rounds them)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    values = numpy_of(pc.cast(array, pa.float64(), safe=False)).copy()
    if array.null_count:
        values[~_valid(array)] = np.nan
    return values


def present(array: Any) -> np.ndarray:
    """True where the row holds a value: not null, not NaN, not blank text."""
    import pyarrow.compute as pc

    kind = kind_of(array)
    mask = _valid(array)
    if kind == NUMBER and not _is_integer(array):
        mask &= ~np.isnan(numpy_of(array))
    elif kind == TEXT:
        mask &= numpy_of(pc.utf8_length(pc.utf8_trim_whitespace(array))) != 0
    return mask


@dataclass(frozen=True)
class TextCodes:
    """Kept text values as codes into their distinct values."""

    codes: np.ndarray
    """Position in ``levels`` of each kept row's value."""
    levels: list[str]
    """The distinct values."""


def kept_values(array: Any, keep: np.ndarray) -> np.ndarray | TextCodes:
    """The values of the rows ``keep`` marks (rows that hold a value), for ``distinct``
    and ``equal_to``: numpy for numbers and booleans (dtype as pandas gives them)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    kind = kind_of(array)
    if kind == TEXT:
        kept = array.filter(_arrow_mask(keep)).combine_chunks().dictionary_encode()
        return TextCodes(numpy_of(kept.indices), kept.dictionary.to_pylist())
    if array.null_count and _is_integer(array):
        array = pc.cast(array, pa.float64(), safe=False)
    return numpy_of(array)[keep]


def distinct(values: np.ndarray | TextCodes) -> list[Any]:
    """Distinct values of ``kept_values``: numpy scalars (numbers) or str (text)."""
    if isinstance(values, TextCodes):
        return list(values.levels)
    return list(np.unique(values))


def equal_to(values: np.ndarray | TextCodes, level: Any) -> np.ndarray:
    """Where ``kept_values`` equal ``level`` (one of ``distinct``), as a bool array."""
    if isinstance(values, TextCodes):
        return values.codes == values.levels.index(level)
    return np.asarray(values == level, dtype=bool)


def numpy_of(array: Any) -> np.ndarray:
    """The values of a ChunkedArray or Array of fixed-width numbers or booleans, from its
    buffers (slots of nulls hold whatever the buffer holds)."""
    chunks = getattr(array, "chunks", [array])
    dtype = np.dtype(bool) if _is_boolean(array) else np.dtype(array.type.to_pandas_dtype())
    parts = [_chunk_values(chunk, dtype) for chunk in chunks if len(chunk)]
    if not parts:
        return np.empty(0, dtype=dtype)
    return parts[0] if len(parts) == 1 else np.concatenate(parts)


def _chunk_values(chunk: Any, dtype: np.dtype) -> np.ndarray:
    size, offset = len(chunk), chunk.offset
    data = chunk.buffers()[1]
    if dtype.kind == "b":
        bits = np.unpackbits(np.frombuffer(data, dtype=np.uint8), bitorder="little")
        return bits[offset : offset + size].astype(bool)
    return np.frombuffer(data, dtype=dtype, count=size, offset=offset * dtype.itemsize)


def _valid(array: Any) -> np.ndarray:
    import pyarrow.compute as pc

    if not array.null_count:
        return np.ones(len(array), dtype=bool)
    return numpy_of(pc.is_valid(array))


def _arrow_mask(keep: np.ndarray) -> Any:
    """A numpy bool mask as an Arrow boolean array, built from its bits."""
    import pyarrow as pa

    bits = np.packbits(np.asarray(keep, dtype=bool), bitorder="little")
    return pa.Array.from_buffers(pa.bool_(), len(keep), [None, pa.py_buffer(bits)])


def _is_boolean(array: Any) -> bool:
    import pyarrow as pa

    return bool(pa.types.is_boolean(array.type))


def _is_integer(array: Any) -> bool:
    import pyarrow as pa

    return bool(pa.types.is_integer(array.type))

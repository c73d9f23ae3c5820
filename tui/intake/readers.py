"""Read a data file into pandas, choosing the reader by the file's extension.

Files are only ever opened for reading. Every failure to read becomes an ``InputProblem``
naming the file, so the command line can print one line instead of a traceback. pandas is
imported by the readers that build frames, not on import: a Parquet scan reads its
columns through pyarrow alone (``read_arrow``, ``read_floats``) and never needs it.
"""

from __future__ import annotations

import json
import os
import sys
import threading
import warnings
from collections import Counter
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any, TypeVar

import numpy as np

from tui.intake.arrow_columns import floats
from tui.intake.header import check_names, text_header
from tui.names import closest_names
from tui.problems import InputProblem

if TYPE_CHECKING:
    import pandas as pd

PathLike = str | os.PathLike[str]
T = TypeVar("T")

SUPPORTED = frozenset(
    {".csv", ".tsv", ".txt", ".parquet", ".feather", ".sas7bdat", ".xpt", ".dta", ".sav"}
)
"""File extensions bendwise reads (compared case-insensitively); ``.sav`` and version 8
``.xpt`` need pyreadstat."""

_SEPARATORS = {".csv": ",", ".tsv": "\t"}
_COLUMNAR = {".parquet", ".feather"}
_KIND = {
    ".csv": "CSV text",
    ".tsv": "tab-separated text",
    ".txt": "delimited text",
    ".parquet": "a Parquet file",
    ".feather": "a Feather file",
    ".sas7bdat": "a SAS dataset",
    ".xpt": "a SAS transport file",
    ".dta": "a Stata dataset",
    ".sav": "an SPSS file",
}

# pandas decodes an IBM zero in transport files as the smallest IBM float, 16**-65 == 2**-260
# (pandas issue #50670); no real measurement has that value, so it is read back as zero.
_IBM_ZERO = 2.0**-260

# A number written with a decimal comma, as in files that use ';' between fields.
_DECIMAL_COMMA = r"[-+]?(?:\d+(?:,\d*)?|,\d+)(?:[eE][-+]?\d+)?"


def read_table(path: PathLike, columns: list[str] | None = None) -> pd.DataFrame:
    """Read the file at ``path`` (all columns, or only ``columns`` in the order given).

    Text columns come back with a non-numeric dtype and numeric columns with a numeric one;
    blank text counts as missing. Raises ``InputProblem`` for anything unusable.
    """
    file, ext = _checked(path)
    wanted = None if columns is None else list(dict.fromkeys(columns))
    if wanted is not None:
        _require_columns(file, wanted, list_columns(file))
    frame = _read(file, ext, wanted)
    return frame if wanted is None else frame[wanted]


def list_columns(path: PathLike) -> list[str]:
    """Column names of the file, in file order; Parquet and Feather read only their schema."""
    file, ext = _checked(path)
    names = _stored_names(file, ext)
    check_names(file, names)
    return names


def _stored_names(file: Path, ext: str) -> list[str]:
    kind = _KIND[ext]
    if ext in _SEPARATORS or ext == ".txt":
        sep = _separator(file, ext)
        return _attempt(file, kind, lambda: text_header(file, sep))
    if ext == ".parquet":
        return _attempt(file, kind, lambda: _parquet_names(file))
    if ext == ".feather":
        return _attempt(file, kind, lambda: _feather_names(file))
    if ext in {".sas7bdat", ".xpt"}:
        return _attempt(file, kind, lambda: _sas_names(file, ext))
    if ext == ".dta":
        return _attempt(file, kind, lambda: _stata_names(file))
    reader = _pyreadstat()
    _, meta = _attempt(file, kind, lambda: reader.read_sav(str(file), metadataonly=True))
    return [str(name) for name in meta.column_names]


def read_column(path: PathLike, name: str) -> pd.Series:
    """One column of the file as a Series named ``name``.

    Parquet and Feather read only that column, so a scan over many columns keeps memory near
    one column. Other formats cannot read a single column cheaply: the whole table is read
    once and kept (only the most recent file, re-read if the file changes), so calling this
    once per column parses the file once. ``drop_cached_table`` releases that memory.
    """
    file, ext = _checked(path)
    if ext == ".parquet":
        return _OPEN_PARQUET.column(file, name)
    if ext in _COLUMNAR:
        _require_columns(file, [name], list_columns(file))
        return _read(file, ext, [name])[name]
    frame = _LAST_TABLE.get(file, lambda: _read(file, ext, None))
    _require_columns(file, [name], [str(column) for column in frame.columns])
    # pandas copy-on-write means a caller changing this Series cannot alter the kept table.
    return frame[name]


def read_arrow(path: PathLike, name: str) -> Any | None:
    """One Parquet column as stored, as a pyarrow ChunkedArray (no pandas metadata
    applied, no DataFrame built); None for any other file type."""
    file, ext = _checked(path)
    if ext != ".parquet":
        return None
    return _OPEN_PARQUET.arrow(file, name)


def read_floats(path: PathLike, name: str) -> np.ndarray | None:
    """A Parquet column stored as numbers or booleans, as float64 (missing: NaN; ±inf
    kept), read without building a DataFrame; None for any other file or stored type.

    The same numbers as ``read_column`` then a float conversion, but not slowed by the
    file's pandas metadata, which is parsed again for every column read and costs
    milliseconds a column when a file has thousands of columns.
    """
    file, ext = _checked(path)
    if ext != ".parquet":
        return None
    return _OPEN_PARQUET.floats(file, name)


def read_floats_many(path: PathLike, names: Sequence[str]) -> list[np.ndarray | None]:
    """``read_floats`` of several columns in one Parquet read (one call costs about as
    much as reading a few columns, so a scan of a wide file reads them in batches)."""
    file, ext = _checked(path)
    if ext != ".parquet":
        return [None] * len(names)
    return _OPEN_PARQUET.floats_many(file, names)


def drop_cached_table() -> None:
    """Forget the whole table ``read_column`` keeps for row-oriented formats."""
    _LAST_TABLE.clear()


class _LastTable:
    """The most recently read whole table, keyed by the file's path, size and change time."""

    def __init__(self) -> None:
        self._lock = threading.Lock()
        self._key: tuple[str, int, int] | None = None
        self._frame: pd.DataFrame | None = None

    def get(self, file: Path, load: Callable[[], pd.DataFrame]) -> pd.DataFrame:
        stat = file.stat()
        key = (str(file.resolve()), stat.st_size, stat.st_mtime_ns)
        # Held while loading so two workers asking for the same file parse it only once.
        with self._lock:
            if self._key != key or self._frame is None:
                self._key, self._frame = None, None
                self._frame = load()
                self._key = key
            return self._frame

    def clear(self) -> None:
        with self._lock:
            self._key, self._frame = None, None


_LAST_TABLE = _LastTable()


class _OpenParquet:
    """The most recently read Parquet file, kept open with its footer parsed: reading the
    footer again for every column costs more than the column itself when a file has
    thousands of columns. One per process (forked workers must not share a file position)
    and per path, size and change time; reads are serialised."""

    def __init__(self) -> None:
        self._lock = threading.Lock()
        self._key: tuple[str, int, int, int] | None = None
        self._file: Any = None
        self._names: list[str] = []
        self._pandas: dict | None = None
        self._types: dict[str, Any] = {}

    def column(self, file: Path, name: str) -> pd.Series:
        with self._lock:
            opened = self._open(file)
            _require_columns(file, [name], self._names)
            pandas = self._pandas
            table = _attempt(
                file, "Parquet", lambda: opened.read(columns=[name], use_pandas_metadata=False)
            )
            # The file's pandas metadata names every column: parsed for each read, it
            # costs more than the read itself at thousands of columns. Keep this one's.
            table = table.replace_schema_metadata(_one_column_metadata(pandas, name))
            frame = _attempt(file, "Parquet", table.to_pandas)
        return _tidy(frame)[name]

    def arrow(self, file: Path, name: str) -> Any:
        with self._lock:
            opened = self._open(file)
            _require_columns(file, [name], self._names)
            table = _attempt(
                file, "Parquet", lambda: opened.read(columns=[name], use_pandas_metadata=False)
            )
        return table.column(0)

    def floats(self, file: Path, name: str) -> np.ndarray | None:
        return self.floats_many(file, [name])[0]

    def floats_many(self, file: Path, names: Sequence[str]) -> list[np.ndarray | None]:
        with self._lock:
            opened = self._open(file)
            _require_columns(file, list(names), self._names)
            # None for a repeated name (the general reader's) or a type not numbers.
            wanted = list(dict.fromkeys(n for n in names if _is_number(self._types.get(n))))
            table = None
            if wanted:
                table = _attempt(
                    file, "Parquet", lambda: opened.read(columns=wanted, use_pandas_metadata=False)
                )
        # From the buffers: pyarrow's to_numpy would load pandas.
        found = {name: floats(table.column(i)) for i, name in enumerate(wanted)}  # type: ignore[union-attr]
        # A name asked for twice gets its own copy: callers may change what they receive.
        out: list[np.ndarray | None] = []
        given: set[str] = set()
        for name in names:
            values = found.get(name)
            out.append(values.copy() if values is not None and name in given else values)
            given.add(name)
        return out

    def _open(self, file: Path) -> Any:
        """The open file for ``file`` (lock held), opened again when it changed."""
        stat = file.stat()
        key = (str(file.resolve()), stat.st_size, stat.st_mtime_ns, os.getpid())
        if self._key != key:
            self._key, self._file = None, None
            self._file, self._names = _attempt(file, "Parquet", lambda: _parquet_open(file))
            # Stored types once: the schema is built anew each time it is asked for.
            schema = self._file.schema_arrow
            found = [(field.name, field.type) for field in schema]
            seen = Counter(name for name, _ in found)
            self._types = {name: kind for name, kind in found if seen[name] == 1}
            self._pandas = schema.pandas_metadata
            self._key = key
        return self._file


def _is_number(kind: Any) -> bool:
    """A stored type read straight to floats: integers, floats and booleans."""
    import pyarrow as pa

    if kind is None:
        return False
    return pa.types.is_integer(kind) or pa.types.is_floating(kind) or pa.types.is_boolean(kind)


def _one_column_metadata(pandas: dict | None, name: str) -> dict[bytes, bytes] | None:
    """The file's pandas metadata cut down to one column (no index: rows stay in order)."""
    if pandas is None:
        return None
    columns = [c for c in pandas.get("columns", []) if c.get("field_name") == name]
    return {b"pandas": json.dumps({**pandas, "columns": columns, "index_columns": []}).encode()}


def _parquet_open(file: Path) -> tuple[Any, list[str]]:
    import pyarrow.parquet as pq

    opened = pq.ParquetFile(file)
    return opened, _without_index(opened.schema_arrow)


_OPEN_PARQUET = _OpenParquet()


def _checked(path: PathLike) -> tuple[Path, str]:
    """The path and its lower-cased extension, after the checks every reader needs."""
    file = Path(path)
    if not file.exists():
        raise InputProblem(f"file not found: {file}")
    if file.is_dir():
        raise InputProblem(f"{file} is a directory, not a data file")
    ext = file.suffix.lower()
    if ext not in SUPPORTED:
        what = f"type '{ext}'" if ext else "no file extension"
        raise InputProblem(
            f"{file} has unsupported {what}; supported: {', '.join(sorted(SUPPORTED))}"
        )
    try:
        size = file.stat().st_size
    except OSError as exc:
        raise InputProblem(f"cannot read {file}: {_reason(exc)}") from exc
    if size == 0:
        raise InputProblem(f"{file} is empty")
    if not os.access(file, os.R_OK):
        raise InputProblem(f"cannot read {file}: permission denied")
    return file, ext


def _require_columns(file: Path, wanted: Sequence[str], present: Sequence[str]) -> None:
    missing = [name for name in wanted if name not in set(present)]
    if not missing:
        return
    if len(missing) == 1:
        near = closest_names(missing[0], present)
        hint = f"; closest: {', '.join(near)}" if near else ""
        raise InputProblem(f"column '{missing[0]}' not found in {file}{hint}")
    shown = ", ".join(f"'{name}'" for name in missing)
    raise InputProblem(f"columns not found in {file}: {shown}")


def _read(file: Path, ext: str, columns: list[str] | None) -> pd.DataFrame:
    """Dispatch on the extension, then tidy dtypes so all formats come back alike."""
    import pandas as pd

    kind = _KIND[ext]
    if ext in _SEPARATORS or ext == ".txt":
        sep = _separator(file, ext)
        check_names(file, _attempt(file, kind, lambda: text_header(file, sep)))
        frame = _read_text(file, sep, columns, kind)
    elif ext == ".parquet":
        frame = _attempt(file, kind, lambda: pd.read_parquet(file, columns=columns))
    elif ext == ".feather":
        frame = _attempt(file, kind, lambda: pd.read_feather(file, columns=columns))
    elif ext in {".sas7bdat", ".xpt"}:
        fmt = "xport" if ext == ".xpt" else "sas7bdat"
        if ext == ".xpt" and _is_xport_v8(file):
            frame = _attempt(file, kind, lambda: _read_xport_v8(file))
        else:
            # encoding="infer" decodes text columns instead of handing back bytes.
            frame = _attempt(file, kind, lambda: pd.read_sas(file, format=fmt, encoding="infer"))
            if ext == ".xpt":
                frame = _restore_xport_zeros(frame)
        if columns is not None:
            frame = frame[columns]
    elif ext == ".dta":
        frame = _attempt(file, kind, lambda: pd.read_stata(file, columns=columns))
    else:
        reader = _pyreadstat()
        frame, _ = _attempt(file, kind, lambda: reader.read_sav(str(file), usecols=columns))
    check_names(file, [str(name) for name in frame.columns])
    return _tidy(frame)


def _read_text(file: Path, sep: str, columns: list[str] | None, kind: str) -> pd.DataFrame:
    try:
        frame = _csv(file, sep, engine="pyarrow", usecols=columns)
    except MemoryError:
        raise
    except Exception:
        # pyarrow refuses some files the C parser reads (lines with fewer fields than the
        # header, for one); for files neither can read, the C parser's errors are clearer.
        frame = _attempt(file, kind, lambda: _csv(file, sep, engine="c", usecols=columns))
    if sep == ";":
        frame = _read_decimal_commas(frame)
    return frame


def _csv(file: Path, sep: str, engine: str, **options: Any) -> pd.DataFrame:
    import pandas as pd

    if engine == "c":
        # index_col=False stops pandas from quietly turning an extra first field into the
        # index; low_memory=False infers each column's type from all of it, not in chunks.
        options.update(index_col=False, low_memory=False)
    with warnings.catch_warnings():
        # Lines longer than the header would otherwise be cut short with only a warning.
        warnings.simplefilter("error", pd.errors.ParserWarning)
        return pd.read_csv(file, sep=sep, engine=engine, **options)


def _separator(file: Path, ext: str) -> str:
    """The field separator: fixed for .csv and .tsv, sniffed from the first line for .txt."""
    if ext in _SEPARATORS:
        return _SEPARATORS[ext]
    try:
        with file.open("rb") as handle:
            first = handle.readline(1 << 20)
    except OSError as exc:
        raise InputProblem(f"cannot read {file}: {_reason(exc)}") from exc
    counts = {sep: first.count(sep.encode()) for sep in ("\t", ",", ";")}
    # Ties go to the earlier separator; a line without any means a single column.
    return max(counts, key=lambda sep: counts[sep]) if any(counts.values()) else ","


def _read_decimal_commas(frame: pd.DataFrame) -> pd.DataFrame:
    """Turn text columns that are all decimal-comma numbers (``3,75``) into numbers."""
    import pandas as pd

    for position in range(frame.shape[1]):
        column = frame.iloc[:, position]
        if not (isinstance(column.dtype, pd.StringDtype) or column.dtype == object):
            continue
        text = column.dropna().astype("str").str.strip()
        if text.empty or not text.str.contains(",", regex=False).any():
            continue
        if text.str.fullmatch(_DECIMAL_COMMA).all():
            cleaned = column.astype("str").str.strip().str.replace(",", ".", regex=False)
            frame.isetitem(position, pd.to_numeric(cleaned))
    return frame


def _restore_xport_zeros(frame: pd.DataFrame) -> pd.DataFrame:
    for position in range(frame.shape[1]):
        column = frame.iloc[:, position]
        if column.dtype.kind != "f":
            continue
        wrong = np.abs(column.to_numpy()) == _IBM_ZERO
        if wrong.any():
            frame.isetitem(position, column.mask(wrong, 0.0))
    return frame


def _tidy(frame: pd.DataFrame) -> pd.DataFrame:
    """Give every format the same dtypes: numbers numeric, booleans boolean, text as str.

    Readers hand back object columns for Decimal values, booleans with gaps and text; left
    as object, numbers would be skipped as text. Blank text is how several statistics
    packages store a missing string, so it becomes missing here.
    """
    import pandas as pd
    from pandas.api.types import infer_dtype

    if not isinstance(frame.index, pd.RangeIndex) or frame.index.start != 0:
        frame = frame.reset_index(drop=True)
    for position in range(frame.shape[1]):
        column = frame.iloc[:, position]
        tidied = column
        if column.dtype == object:
            found = infer_dtype(column, skipna=True)
            if found == "boolean":
                tidied = column.astype("boolean")
            elif found in {"integer", "floating", "mixed-integer-float", "decimal"}:
                tidied = pd.to_numeric(column, errors="coerce")
                if tidied.dtype == object:
                    tidied = tidied.astype("float64")
            elif found == "string":
                tidied = column.astype("str")
        if isinstance(tidied.dtype, pd.StringDtype):
            blank = tidied.str.strip().eq("")
            if blank.any():
                tidied = tidied.mask(blank)
        if tidied is not column:
            frame.isetitem(position, tidied)
    return frame


def _parquet_names(file: Path) -> list[str]:
    import pyarrow.parquet as pq

    return _without_index(pq.read_schema(file))


def _feather_names(file: Path) -> list[str]:
    import pyarrow as pa
    import pyarrow.feather as feather

    try:
        with pa.memory_map(str(file), "r") as source:
            schema = pa.ipc.open_file(source).schema
    except pa.ArrowInvalid:
        # Version 1 Feather files are not Arrow IPC files; read them the slow way.
        schema = feather.read_table(str(file)).schema
    return _without_index(schema)


def _without_index(schema: Any) -> list[str]:
    """Schema names minus the columns pandas stored as the frame's index."""
    meta = schema.pandas_metadata or {}
    index = {entry for entry in meta.get("index_columns", []) if isinstance(entry, str)}
    return [name for name in schema.names if name not in index]


def _sas_names(file: Path, ext: str) -> list[str]:
    import pandas as pd

    if ext == ".xpt" and _is_xport_v8(file):
        _, meta = _pyreadstat(_XPORT_V8_NEED).read_xport(str(file), metadataonly=True)
        return [str(name) for name in meta.column_names]
    fmt = "xport" if ext == ".xpt" else "sas7bdat"
    with pd.read_sas(file, format=fmt, encoding="infer", iterator=True) as reader:
        names = reader.columns if ext == ".xpt" else reader.column_names
    return [name.decode(errors="replace") if isinstance(name, bytes) else name for name in names]


def _stata_names(file: Path) -> list[str]:
    import pandas as pd

    with pd.read_stata(file, iterator=True) as reader:
        return list(reader.variable_labels())


def _is_xport_v8(file: Path) -> bool:
    """Whether a transport file is version 8/9 (long names), from its first header record.

    Version 5 files open with ``LIBRARY HEADER RECORD`` and version 8 files with ``LIBV8``
    in its place (SAS, "The Record Layout of SAS Version 8 and 9 Transport Files").
    """
    try:
        with file.open("rb") as handle:
            first = handle.read(80)
    except OSError as exc:
        raise InputProblem(f"cannot read {file}: {_reason(exc)}") from exc
    return first.startswith(b"HEADER RECORD*******LIBV8 ")


def _read_xport_v8(file: Path) -> pd.DataFrame:
    # pandas reads only version 5; pyreadstat decodes IBM floats itself (zeros stay zero).
    frame, _ = _pyreadstat(_XPORT_V8_NEED).read_xport(str(file))
    return frame


_XPORT_V8_NEED = "reading version 8 SAS transport files"


def _pyreadstat(need: str = "reading .sav files") -> Any:
    try:
        import pyreadstat
    except ImportError as exc:
        raise InputProblem(
            f"{need} needs the optional SPSS support; install it with: pip install 'bendwise[spss]'"
        ) from exc
    return pyreadstat


def _attempt(file: Path, kind: str, read: Callable[[], T]) -> T:
    """Run a third-party read, turning whatever it raises into one line naming the file."""
    try:
        return read()
    except (InputProblem, MemoryError):
        raise
    except Exception as exc:  # corrupt files make parsers raise almost anything
        raise InputProblem(f"cannot read {file} as {kind}: {_reason(exc)}") from exc


def _reason(exc: BaseException) -> str:
    if isinstance(exc, UnicodeDecodeError):
        return (
            f"not UTF-8 text (byte 0x{exc.object[exc.start]:02x} at position {exc.start}); "
            "save it as UTF-8"
        )
    pd = sys.modules.get("pandas")  # an error pandas raised means pandas is loaded
    if pd is not None and isinstance(exc, pd.errors.EmptyDataError):
        return "no columns found"
    if pd is not None and isinstance(exc, pd.errors.ParserWarning):
        return "some lines have more fields than the header"
    if isinstance(exc, PermissionError):
        return "permission denied"
    text = str(exc).strip().splitlines()
    first = text[0] if text else type(exc).__name__
    # The C parser prefixes its messages with wording that tells the reader nothing.
    first = first.replace("Error tokenizing data. C error: ", "")
    return first if len(first) <= 160 else first[:157] + "..."

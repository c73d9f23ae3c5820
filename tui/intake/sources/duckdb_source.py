"""DuckDB: a database file (``PATH.duckdb``, opened read-only) with a table or query, or a
CSV or Parquet file reduced by DuckDB without loading it (``--engine duckdb``).

A binned column is sorted once by a window (``sorted_pass.py``): the order statistics and
the quantile grid are read off that sort exactly, so it gets the very bins a file scan
makes; its rows find their bins by an ASOF join to the bin starts (``bin_join.py``). From
``SKETCH_FROM_ROWS`` rows on, a binned column above zero is instead counted on a fine
lattice of its range, one GROUP BY a column (``lattice_pass.py``: exact bin counts,
quantiles within a 262,144th of the range), and the others are sketched, all in two scans
(``sketch_pass.py``): approximate quantiles, exact bin counts, documented error. The
profile estimates distinct counts (``approx_count_distinct``) only to choose the
path; the exact count comes from the per-value counts or the sort. A CSV file is first
copied once into a DuckDB table in a temporary folder, since every pass over the text
would parse it again. DuckDB runs under ``MEMORY_LIMIT`` and spills sorts to that folder.
"""

from __future__ import annotations

import tempfile
from pathlib import Path
from typing import Any

import numpy as np

from tui.intake.sources.base import SourceColumn, SourceOrigin, query_hash
from tui.intake.sources.dialect import Dialect
from tui.intake.sources.reduce import ReducedInEngine, SqlReduction
from tui.problems import InputProblem

NUMERIC_TYPES = (
    "TINYINT", "SMALLINT", "INTEGER", "BIGINT", "HUGEINT", "UTINYINT", "USMALLINT",
    "UINTEGER", "UBIGINT", "UHUGEINT", "FLOAT", "DOUBLE", "REAL", "BOOLEAN",
)  # fmt: skip
FILE_READERS = {".csv": "read_csv", ".tsv": "read_csv", ".parquet": "read_parquet"}
MEMORY_LIMIT = "500MB"
"""DuckDB's own memory cap (its buffers; it spills sorts to disk beyond it): with Python and
the scan the process stays under 1 GB on 10,000,000 x 20 (benchmarks/duckdb_speed.py)."""
SKETCH_FROM_ROWS = 2_000_000
"""From this many rows with an outcome, binned columns take the approximate two-scan path
(``sketch_pass.py``): 10,000,000 x 20 Parquet in 56 s instead of 111 s (2 cores, load 2
and 3; benchmarks/results/duckdb_speed.md), where an exact sort per column costs seconds;
below it the exact passes stay, and all of the source tests check those to 1e-9."""
STAGED = "bendwise_staged"
"""The table a CSV file is copied into."""


class DuckDBDialect(Dialect):
    """DuckDB: one window sort per binned column, estimated distinct counts in the profile."""

    sorted_pass = True
    approx_distinct = "approx_count_distinct"
    # One GROUPING SETS query over 16 binned columns of 10,000,000 rows was still running
    # after 5 minutes (load 8); one column a query takes seconds each.
    binned_per_query = 1
    asof_bins = True


def _numeric(type_name: str) -> bool:
    upper = type_name.upper()
    return upper in NUMERIC_TYPES or upper.startswith("DECIMAL")


class DuckDBSource(ReducedInEngine):
    """A DuckDB relation, reduced by DuckDB."""

    def __init__(
        self,
        relation: str,
        label: str,
        origin: SourceOrigin,
        database: str | None = None,
        staged: str | None = None,
    ) -> None:
        try:
            import duckdb
        except ImportError:
            raise InputProblem(
                "DuckDB sources need the duckdb package (pip install duckdb)"
            ) from None
        self._duckdb = duckdb
        self._folder = tempfile.TemporaryDirectory(prefix="bendwise-duckdb-")
        self.label, self.origin = label, origin
        try:
            if database:
                self._con = duckdb.connect(database, read_only=True)
            elif staged:
                self._con = duckdb.connect(str(Path(self._folder.name) / "staged.duckdb"))
            else:
                self._con = duckdb.connect(":memory:")
        except duckdb.Error as problem:
            self._folder.cleanup()
            raise InputProblem(f"{label}: cannot open: {problem}") from None
        self.dialect = DuckDBDialect()
        try:
            self.relation = self._set_up(relation, staged)
            described = self._run(f"DESCRIBE SELECT * FROM {self.relation} AS s")
        except InputProblem:
            self.close()
            raise
        relation = self.relation
        self._columns = [SourceColumn(r[0], r[1], _numeric(r[1])) for r in described]
        self._reduction = SqlReduction(
            self.dialect,
            self._run,
            relation,
            self._columns,
            sketch_from=SKETCH_FROM_ROWS,
            arrays=self._arrays,
        )

    def _set_up(self, relation: str, staged: str | None) -> str:
        """Settings for this connection; a CSV file copied into the staging table."""
        # DuckDB draws its own progress bar on the terminal for long statements, across
        # bendwise's progress lines and the review's screen.
        self._run("SET enable_progress_bar = false")
        temp = self.dialect.text(str(Path(self._folder.name) / "spill"))
        self._run(f"SET temp_directory = {temp}")
        self._run(f"SET memory_limit = {self.dialect.text(MEMORY_LIMIT)}")
        self._run("SET preserve_insertion_order = false")
        if staged is None:
            return relation
        self._run(f"CREATE TABLE {STAGED} AS SELECT * FROM {staged}")
        self._numbers_from_text()
        return STAGED

    def _numbers_from_text(self) -> None:
        """Text columns of the staged CSV whose every value is a number become DOUBLE.

        DuckDB's CSV sniffer reads ``inf`` and ``-inf`` as text, where the file scan (and
        pandas) read them as infinite numbers: such a column would be left out instead of
        scanned with its non-finite values counted."""
        d = self.dialect
        text = [r[0] for r in self._run(f"DESCRIBE {STAGED}") if r[1].upper() == "VARCHAR"]
        if not text:
            return
        checks = ", ".join(
            f"count({d.quote(c)}) FILTER (WHERE TRY_CAST({d.quote(c)} AS DOUBLE) IS NULL)"
            for c in text
        )
        failed = self._run(f"SELECT {checks} FROM {STAGED}")[0]
        for column, bad in zip(text, failed, strict=True):
            if bad == 0:
                name = d.quote(column)
                self._run(
                    f"ALTER TABLE {STAGED} ALTER {name} TYPE DOUBLE USING CAST({name} AS DOUBLE)"
                )

    def _run(self, sql: str) -> list[tuple[Any, ...]]:
        try:
            return self._con.execute(sql).fetchall()
        except self._duckdb.Error as problem:
            first = str(problem).splitlines()[0] if str(problem) else type(problem).__name__
            raise InputProblem(f"{self.label}: {first}") from None

    def _arrays(self, sql: str) -> list[np.ndarray]:
        try:
            return list(self._con.execute(sql).fetchnumpy().values())
        except self._duckdb.Error as problem:
            first = str(problem).splitlines()[0] if str(problem) else type(problem).__name__
            raise InputProblem(f"{self.label}: {first}") from None

    def close(self) -> None:
        self._con.close()
        self._folder.cleanup()


def open_duckdb_database(path: str, table: str | None, query: str | None) -> DuckDBSource:
    """A table or query in a DuckDB database file (opened read-only)."""
    if not Path(path).is_file():
        raise InputProblem(f"DuckDB database {path} not found")
    relation = Dialect().relation(table, query)
    what = f"table {table}" if table else "query"
    origin = SourceOrigin("duckdb", None, Path(path).name, table, query_hash(query))
    return DuckDBSource(relation, f"duckdb {Path(path).name} {what}", origin, database=path)


def open_file_through_duckdb(path: str) -> DuckDBSource:
    """A CSV or Parquet file read by DuckDB where it lies, never loaded whole."""
    suffix = Path(path).suffix.lower()
    if suffix not in FILE_READERS:
        raise InputProblem(f"--engine duckdb reads .csv, .tsv and .parquet files, not {path}")
    if not Path(path).is_file():
        raise InputProblem(f"data file {path} not found")
    d = Dialect()
    relation = f"{FILE_READERS[suffix]}({d.text(str(path))})"
    origin = SourceOrigin("duckdb", None, None, Path(path).name)
    if suffix == ".parquet":
        return DuckDBSource(relation, f"duckdb {Path(path).name}", origin)
    return DuckDBSource(relation, f"duckdb {Path(path).name}", origin, staged=relation)

"""DuckDB: a database file (``PATH.duckdb``, opened read-only) with a table or query, or a
CSV or Parquet file reduced by DuckDB without loading it (``--engine duckdb``).

DuckDB's ``quantile_disc`` and ``quantile_cont`` are exact (``quantile_cont`` is numpy's
default linear definition), so a binned column gets the very bins a file scan makes.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from tui.intake.sources.base import SourceColumn, SourceOrigin, query_hash
from tui.intake.sources.dialect import Dialect
from tui.intake.sources.reduce import ReducedInEngine, SqlReduction
from tui.problems import InputProblem

NUMERIC_TYPES = (
    "TINYINT", "SMALLINT", "INTEGER", "BIGINT", "HUGEINT", "UTINYINT", "USMALLINT",
    "UINTEGER", "UBIGINT", "UHUGEINT", "FLOAT", "DOUBLE", "REAL", "BOOLEAN",
)  # fmt: skip
FILE_READERS = {".csv": "read_csv", ".tsv": "read_csv", ".parquet": "read_parquet"}


def _numeric(type_name: str) -> bool:
    upper = type_name.upper()
    return upper in NUMERIC_TYPES or upper.startswith("DECIMAL")


class DuckDBSource(ReducedInEngine):
    """A DuckDB relation, reduced by DuckDB."""

    def __init__(
        self, relation: str, label: str, origin: SourceOrigin, database: str | None = None
    ) -> None:
        try:
            import duckdb
        except ImportError:
            raise InputProblem(
                "DuckDB sources need the duckdb package (pip install duckdb)"
            ) from None
        self._duckdb = duckdb
        try:
            self._con = (
                duckdb.connect(database, read_only=True) if database else duckdb.connect(":memory:")
            )
        except duckdb.Error as problem:
            raise InputProblem(f"{label}: cannot open: {problem}") from None
        self.label, self.origin = label, origin
        self.relation = relation
        self.dialect = Dialect()
        described = self._run(f"DESCRIBE SELECT * FROM {relation} AS s")
        self._columns = [SourceColumn(r[0], r[1], _numeric(r[1])) for r in described]
        self._reduction = SqlReduction(self.dialect, self._run, relation, self._columns)

    def _run(self, sql: str) -> list[tuple[Any, ...]]:
        try:
            return self._con.execute(sql).fetchall()
        except self._duckdb.Error as problem:
            first = str(problem).splitlines()[0] if str(problem) else type(problem).__name__
            raise InputProblem(f"{self.label}: {first}") from None

    def close(self) -> None:
        self._con.close()


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
    return DuckDBSource(relation, f"duckdb {Path(path).name}", origin)

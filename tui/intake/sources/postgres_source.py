"""PostgreSQL: a table or query reduced by the server (psycopg 3, the ``postgres`` extra).

A binned column is sorted once by a window (``sorted_pass.py``), so its order statistics,
quantile grid, smallest gap and distinct count are exact; ``width_bucket`` over an array of
edges does its bucket search inside the server, one column a query.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np

from tui.intake.sources.base import SourceColumn, SourceOrigin, query_hash
from tui.intake.sources.dialect import Dialect
from tui.intake.sources.postgres_url import checked_url, redacted, scrub
from tui.intake.sources.reduce import ReducedInEngine, SqlReduction
from tui.problems import InputProblem

WORK_MEM = "64MB"
"""This connection's sort memory (``SET work_mem``, session only): at the default 4 MB each
column's sort of 1,000,000 rows spills to disk (a sort of 1,000,000 doubles takes about
24 MB); the server's own settings are left alone."""
NUMERIC_TYPES = frozenset({"int2", "int4", "int8", "float4", "float8", "numeric", "bool", "oid"})


class PostgresDialect(Dialect):
    """PostgreSQL's spelling."""

    double = "DOUBLE PRECISION"
    # One window sort a column gives order statistics, grid, gap and distinct count: the
    # percentile arrays and a separate LAG window each sorted every column again (1,000,000
    # x 50: 43 s and 73 s, load 5 to 7).
    sorted_pass = True
    # One GROUPING SETS query over 50 binned columns took 242 s on 1,000,000 rows (load 6): a
    # sort of every wide row per set. One column a query is one hashed GROUP BY.
    binned_per_query = 1

    def picked(self, expr: str, order: str, positions: np.ndarray) -> str:
        listed = ", ".join(str(int(p)) for p in positions)
        return (
            f"array_agg({expr} ORDER BY {order}) "
            f"FILTER (WHERE {order} = ANY(ARRAY[{listed}]::bigint[]))"
        )

    def as_double(self, quoted: str, column: SourceColumn) -> str:
        if column.type == "bool":  # no direct cast from boolean to a float
            return f"CAST(CAST({quoted} AS INTEGER) AS {self.double})"
        return f"CAST({quoted} AS {self.double})"

    def _array(self, probs: Sequence[float]) -> str:
        return "ARRAY[" + ", ".join(repr(float(p)) for p in probs) + "]::float8[]"

    def order_stats(self, expr: str, probs: Sequence[float]) -> str:
        return f"percentile_disc({self._array(probs)}) WITHIN GROUP (ORDER BY {expr})"

    def quantiles(self, expr: str, probs: Sequence[float]) -> str:
        return f"percentile_cont({self._array(probs)}) WITHIN GROUP (ORDER BY {expr})"

    def bucket(self, expr: str, edges: np.ndarray) -> str:
        if edges.size == 0:
            return "0"
        # width_bucket(x, thresholds): the count of thresholds <= x (a binary search).
        return f"width_bucket({expr}, {self._array([float(e) for e in edges])})"


class PostgresSource(ReducedInEngine):
    """A PostgreSQL relation, reduced by the server."""

    def __init__(self, url: str, table: str | None, query: str | None) -> None:
        try:
            import psycopg
        except ImportError:
            raise InputProblem(
                "PostgreSQL sources need psycopg (pip install 'bendwise[postgres]')"
            ) from None
        self._psycopg = psycopg
        self._url = checked_url(url)
        self.dialect = PostgresDialect()
        relation = self.dialect.relation(table, query)
        what = f"table {table}" if table else "query"
        self.label = f"{redacted(url)} {what}"
        self.origin = url_origin(self._url, table, query_hash(query))
        try:
            self._con = psycopg.connect(self._url, autocommit=True)
        except psycopg.Error as problem:
            raise InputProblem(f"{redacted(url)}: {self._first_line(problem)}") from None
        with self._con.cursor() as cur:
            try:
                cur.execute(f"SET work_mem = {self.dialect.text(WORK_MEM)}")
                cur.execute(f"SELECT * FROM {relation} AS s LIMIT 0")
            except psycopg.Error as problem:
                raise InputProblem(f"{self.label}: {self._first_line(problem)}") from None
            names = []
            for d in cur.description:
                info = self._con.adapters.types.get(d.type_code)
                type_name = info.name if info else str(d.type_code)
                names.append(SourceColumn(d.name, type_name, type_name in NUMERIC_TYPES))
        self._columns = names
        self._reduction = SqlReduction(self.dialect, self._run, relation, self._columns)

    def _first_line(self, problem: Exception) -> str:
        text = str(problem).strip().splitlines()
        return scrub(text[0] if text else type(problem).__name__, self._url)

    def _run(self, sql: str) -> list[tuple[Any, ...]]:
        try:
            with self._con.cursor() as cur:
                cur.execute(sql)
                return cur.fetchall()
        except self._psycopg.Error as problem:
            raise InputProblem(f"{self.label}: {self._first_line(problem)}") from None

    def close(self) -> None:
        self._con.close()


def url_origin(url: str, table: str | None, query_sha256: str | None) -> SourceOrigin:
    """Host, port and database of a checked URL (no user, no password)."""
    from urllib.parse import urlsplit

    parts = urlsplit(url)
    host = parts.hostname or None
    if host and parts.port:
        host = f"{host}:{parts.port}"
    database = parts.path.lstrip("/") or None
    return SourceOrigin("postgresql", host, database, table, query_sha256)

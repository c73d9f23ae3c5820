"""Spark: ``spark:NAME``, a table in the session's catalog or a path to Parquet data,
reduced by Spark SQL (pyspark, the ``spark`` extra).

Spark's quantiles at scale are approximate: ``percentile_approx(x, p, accuracy)`` returns a
value whose rank is within ``n / accuracy`` rows of the exact one (Spark SQL reference,
"percentile_approx"). ``ACCURACY`` below keeps that within one row in 100,000; the bins of
a binned column then start within that many rows of a file scan's, and its knots, cuts and
groups come from such quantiles. Columns with few values (and every column under 10,000
rows) are counted per distinct value, exactly. The session binds to 127.0.0.1 unless
Spark's own configuration says otherwise.
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np

from tui.intake.sources.base import SourceColumn, SourceOrigin
from tui.intake.sources.dialect import Dialect
from tui.intake.sources.reduce import ReducedInEngine, SqlReduction
from tui.problems import InputProblem

ACCURACY = 100_000
"""percentile_approx accuracy: rank error at most n / ACCURACY rows."""
DEFAULT_MASTER = "local[*]"
BLOCK = 32
"""Edges per block of a binned column's two-step bucket search."""
NUMERIC_TYPES = frozenset({"tinyint", "smallint", "int", "bigint", "float", "double", "boolean"})


class SparkDialect(Dialect):
    """Spark SQL's spelling: backticks, approximate quantiles, double literals."""

    exact_quantiles = False

    def quote(self, name: str) -> str:
        return "`" + name.replace("`", "``") + "`"

    def text(self, value: str) -> str:
        # Spark string literals read backslash escapes.
        return "'" + value.replace("\\", "\\\\").replace("'", "\\'") + "'"

    def _array(self, probs: Sequence[float]) -> str:
        return "array(" + ", ".join(f"{float(p)!r}D" for p in probs) + ")"

    def order_stats(self, expr: str, probs: Sequence[float]) -> str:
        return f"percentile_approx({expr}, {self._array(probs)}, {ACCURACY})"

    def quantiles(self, expr: str, probs: Sequence[float]) -> str:
        return f"percentile_approx({expr}, {self._array(probs)}, {ACCURACY})"

    def bucket(self, expr: str, edges: np.ndarray) -> str:
        """Count of edges <= x in two steps over literal arrays (blocks of ``BLOCK``): a
        deep CASE tree is too large for Spark's code generation and runs interpreted."""
        if edges.size == 0:
            return "0"
        blocks = [edges[i : i + BLOCK] for i in range(0, edges.size, BLOCK)]
        firsts = self._array([b[0] for b in blocks])
        nested = "array(" + ", ".join(self._array(b) for b in blocks) + ")"
        j = f"size(filter({firsts}, e -> e <= {expr}))"
        inside = f"size(filter(element_at({nested}, {j}), e -> e <= {expr}))"
        return f"CASE WHEN {j} = 0 THEN 0 ELSE ({j} - 1) * {BLOCK} + {inside} END"


def spark_session(master: str | None):
    """The running session, or a new one on ``master`` bound to the loopback address."""
    try:
        from pyspark.sql import SparkSession
    except ImportError:
        raise InputProblem("Spark sources need pyspark (pip install 'bendwise[spark]')") from None
    active = SparkSession.getActiveSession()
    if active is not None:
        return active
    os.environ.setdefault("SPARK_LOCAL_IP", "127.0.0.1")
    builder = SparkSession.builder.master(master or DEFAULT_MASTER).appName("bendwise")
    if (master or DEFAULT_MASTER).startswith("local"):
        builder = builder.config("spark.driver.host", "127.0.0.1").config(
            "spark.driver.bindAddress", "127.0.0.1"
        )
    try:
        return builder.config("spark.ui.enabled", "false").getOrCreate()
    except Exception as problem:  # a JVM that will not start, a master out of reach
        raise InputProblem(f"Spark did not start: {str(problem).splitlines()[0]}") from None


class SparkSource(ReducedInEngine):
    """A Spark table or Parquet path, reduced by Spark SQL."""

    def __init__(self, name: str, master: str | None = None) -> None:
        self._session = spark_session(master)
        self.dialect = SparkDialect()
        self.label = f"spark {name}"
        self.origin = SourceOrigin("spark", master or DEFAULT_MASTER, None, name)
        from pyspark.errors import PySparkException

        self._errors: tuple[type[Exception], ...] = (PySparkException,)
        try:
            if name.endswith(".parquet") or "/" in name or Path(name).exists():
                if not Path(name).exists() and "://" not in name:
                    raise InputProblem(f"spark:{name}: no such Parquet data")
                frame = self._session.read.parquet(name)
                view = f"bendwise_source_{os.getpid()}"
                frame.createOrReplaceTempView(view)
                relation = self.dialect.quote(view)
            else:
                frame = self._session.table(name)
                relation = ".".join(self.dialect.quote(p) for p in name.split("."))
        except self._errors as problem:
            raise InputProblem(f"{self.label}: {str(problem).splitlines()[0]}") from None
        self._columns = [
            SourceColumn(f.name, f.dataType.simpleString(), _numeric(f.dataType.simpleString()))
            for f in frame.schema.fields
        ]
        self._reduction = SqlReduction(self.dialect, self._run, relation, self._columns)

    def _run(self, sql: str) -> list[tuple[Any, ...]]:
        try:
            return [tuple(row) for row in self._session.sql(sql).collect()]
        except self._errors as problem:
            raise InputProblem(f"{self.label}: {str(problem).splitlines()[0]}") from None

    def close(self) -> None:
        """The session is left running: it may be shared (a notebook, a test session)."""


def _numeric(type_name: str) -> bool:
    return type_name in NUMERIC_TYPES or type_name.startswith("decimal")

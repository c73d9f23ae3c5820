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
NUMERIC_TYPES = frozenset({"tinyint", "smallint", "int", "bigint", "float", "double", "boolean"})


class SparkDialect(Dialect):
    """Spark SQL's spelling: backticks, approximate quantiles, double literals."""

    exact_quantiles = False
    # Exact COUNT(DISTINCT) of many columns in one query expands every row once per column.
    approx_distinct = "approx_count_distinct"
    # 50 columns' percentile_approx sketches in one query stopped the local JVM (default
    # 1 GB driver) on 1,000,000 rows; a few columns a query stay small.
    quantiles_per_query = 5

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
        self._reduction = SqlReduction(
            self.dialect, self._run, relation, self._columns, self._bucketize
        )

    def _bucketize(self, base: str, column: str, edges: np.ndarray) -> tuple[str, str]:
        """A view of ``b`` with ``column``'s bin number (count of edges <= x) found by
        ``Bucketizer``'s binary search in the JVM: higher-order ``filter`` expressions over
        the edges, or a CASE tree too deep to compile, run interpreted."""
        from pyspark.ml.feature import Bucketizer

        frame = self._session.sql(f"{base}SELECT * FROM b")
        view = f"bendwise_bins_{os.getpid()}"
        if edges.size == 0:  # one bin: Bucketizer needs at least three splits
            frame.selectExpr("*", "0 AS kb__").createOrReplaceTempView(view)
            return self.dialect.quote(view), "kb__"
        splits = [-float("inf"), *(float(e) for e in edges), float("inf")]
        bucketed = Bucketizer(
            splits=splits, inputCol=column, outputCol="kd__", handleInvalid="keep"
        ).transform(frame)
        bucketed.selectExpr("*", "CAST(kd__ AS INT) AS kb__").createOrReplaceTempView(view)
        return self.dialect.quote(view), "kb__"

    def _run(self, sql: str) -> list[tuple[Any, ...]]:
        try:
            return [tuple(row) for row in self._session.sql(sql).collect()]
        except self._errors as problem:
            raise InputProblem(f"{self.label}: {str(problem).splitlines()[0]}") from None

    def close(self) -> None:
        """The session is left running: it may be shared (a notebook, a test session)."""


def _numeric(type_name: str) -> bool:
    return type_name in NUMERIC_TYPES or type_name.startswith("decimal")

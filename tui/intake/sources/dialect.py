"""How each engine spells the few SQL pieces the pushed-down reduction needs.

Everything else in the reduction is plain SQL that DuckDB, PostgreSQL and Spark all run:
CASE, COUNT(DISTINCT), GROUPING SETS, window LAG, scalar subqueries.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from decimal import Decimal

import numpy as np

from tui.intake.sources.base import SourceColumn
from tui.problems import InputProblem


class Dialect:
    """ANSI spelling (DuckDB's); engines override what they spell differently."""

    double = "DOUBLE"
    """The 64-bit float type."""
    exact_quantiles = True
    """The engine's quantiles are exact (otherwise approximate, documented by the source)."""
    sorted_pass = False
    """Binned columns' order statistics, grid, gap and distinct count come from one window
    sort per column (``sorted_pass.py``) instead of quantile aggregates."""
    binned_per_query: int | None = None
    """Binned columns counted per query (None: all in one GROUPING SETS query)."""
    quantiles_per_query: int | None = None
    """Binned columns whose quantile aggregates share one query (None: all of them)."""
    asof_bins = False
    """Bin numbers come from an ASOF join to the bin starts (``bin_join.py``), one column a
    query, instead of a per-row ``bucket`` expression."""
    approx_distinct: str | None = None
    """An estimating distinct-count function: the profile then only guesses which columns
    have few values, and the exact count comes from their counts or their sort."""

    def quote(self, name: str) -> str:
        """A quoted identifier."""
        return '"' + name.replace('"', '""') + '"'

    def relation(self, table: str | None, query: str | None) -> str:
        """The FROM item: ``[schema.]table`` quoted part by part, or a query in brackets."""
        if query is not None:
            text = query.strip().rstrip(";").strip()
            if not text:
                raise InputProblem("--query is empty")
            return f"({text})"
        assert table is not None
        parts = table.split(".")
        if any(not p for p in parts) or len(parts) > 3:
            raise InputProblem(f"--table {table!r} is not a table name ([SCHEMA.]NAME)")
        return ".".join(self.quote(p) for p in parts)

    def as_double(self, quoted: str, column: SourceColumn) -> str:
        """The column as a double (booleans as 0/1)."""
        return f"CAST({quoted} AS {self.double})"

    def number(self, value: float) -> str:
        """An exact double literal (repr round-trips)."""
        if not math.isfinite(value):
            word = "NaN" if math.isnan(value) else ("Infinity" if value > 0 else "-Infinity")
            return f"CAST('{word}' AS {self.double})"
        return f"CAST('{float(value)!r}' AS {self.double})"

    def text(self, value: str) -> str:
        """A string literal."""
        return "'" + value.replace("'", "''") + "'"

    def literal(self, value: object) -> str:
        """A literal equal to an outcome level as the engine returned it."""
        if isinstance(value, bool | np.bool_):
            return "TRUE" if value else "FALSE"
        if isinstance(value, int | np.integer):
            return str(int(value))
        if isinstance(value, Decimal):
            scale = max(0, -int(value.as_tuple().exponent))
            return f"CAST({self.text(str(value))} AS DECIMAL(38, {scale}))"
        if isinstance(value, float | np.floating):
            return self.number(float(value))
        if isinstance(value, str):
            return self.text(value)
        raise InputProblem(f"outcome values of type {type(value).__name__} are not supported")

    def order_stats(self, expr: str, probs: Sequence[float]) -> str:
        """Discrete quantiles (actual values) at ``probs``, as one array."""
        return f"quantile_disc({expr}, {self._list(probs)})"

    def quantiles(self, expr: str, probs: Sequence[float]) -> str:
        """Linear-interpolation quantiles (numpy's default, type 7) at ``probs``."""
        return f"quantile_cont({expr}, {self._list(probs)})"

    def picked(self, expr: str, order: str, positions: np.ndarray) -> str:
        """The values of ``expr`` on the rows whose ``order`` is one of ``positions``, as one
        array in ``order``."""
        listed = ", ".join(str(int(p)) for p in positions)
        return (
            f"list({expr} ORDER BY {order}) FILTER (WHERE {order} IN (SELECT unnest([{listed}])))"
        )

    def _list(self, probs: Sequence[float]) -> str:
        return "[" + ", ".join(repr(float(p)) for p in probs) + "]"

    def bucket(self, expr: str, edges: np.ndarray) -> str:
        """Count of ``edges`` (ascending) at or below ``expr``: a balanced CASE tree, about
        ten comparisons a row for a thousand edges."""
        literals = [self.number(float(e)) for e in edges]

        def tree(lo: int, hi: int) -> str:  # the answer lies in lo..hi
            if lo == hi:
                return str(lo)
            mid = (lo + hi + 1) // 2
            return (
                f"CASE WHEN {expr} >= {literals[mid - 1]} THEN {tree(mid, hi)} "
                f"ELSE {tree(lo, mid - 1)} END"
            )

        return tree(0, len(literals))

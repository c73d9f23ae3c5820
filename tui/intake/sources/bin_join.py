"""DuckDB's bin counts of one binned column by an ASOF join against its bin starts.

A row's bin is the count of bin starts at or below its value (``bins.py``). Spelled as a
per-row CASE tree over about 1,000 starts this cost 94 s on one column of 10,000,000 rows;
an ASOF join of the rows to a table of (start, bin number), which finds the last start at or
below each value, took 12 s on the same column, same cuts, same answer (2 cores, load 11;
benchmarks/duckdb_bins.py). Rows below the first start match nothing and fall in bin 0.
"""

from __future__ import annotations

import numpy as np

from tui.intake.sources.dialect import Dialect

GROUPED_SHARE = 100
"""Values are counted first, then joined, when rows outnumber distinct values this many
times: 0.4 s against 7.9 s (plain join) and 6.6 s (CASE tree) on a count column of
10,000,000 rows and about 500 values, but 23 s against 11 s on a column of many values."""


def bin_counts_query(
    base: str,
    column: str,
    low_tail: float,
    high_tail: float,
    edges: np.ndarray,
    d: Dialect,
    grouped: bool = False,
) -> str:
    """One statement answering (bin, tail value, rows, events, summed x) per bin of
    ``column``: bin -1 with the value itself for each tail value, else the bin number and
    NULL. Rows whose value is missing are left out. ``grouped``: join the distinct values
    with their counts instead of the rows (for columns with few values)."""
    lo, hi = d.number(low_tail), d.number(high_tail)
    tail = f"b.{column} < {lo} OR b.{column} >= {hi}"
    if edges.size:
        listed = "[" + ", ".join(d.number(float(e)) for e in edges) + "]"
        starts = (
            f", e__ AS (SELECT unnest({listed}) AS lo__, "
            f"unnest(range(1, {edges.size + 1})) AS k__) "
        )
        join, key = f" ASOF LEFT JOIN e__ ON b.{column} >= e__.lo__", "COALESCE(e__.k__, 0)"
    else:
        starts, join, key = " ", "", "0"
    if grouped:  # b below is the distinct values with their rows and events
        rows = (
            f", g__ AS (SELECT {column}, COUNT(*) AS n__, SUM(y__) AS y__ FROM b "
            f"WHERE {column} IS NOT NULL GROUP BY {column})"
        )
        source, n, x = "g__ AS b", "n__", f"b.{column} * n__"
    else:
        rows, source, n, x = "", "b", "1", f"b.{column}"
    return (
        f"{base.rstrip()}{starts.rstrip()}{rows}, bb AS (SELECT y__, {n} AS n__, {x} AS x__, "
        f"CASE WHEN {tail} THEN -1 ELSE {key} END AS k__, "
        f"CASE WHEN {tail} THEN b.{column} END AS v__ "
        f"FROM {source}{join} WHERE b.{column} IS NOT NULL) "
        "SELECT k__, v__, SUM(n__), SUM(y__), SUM(x__) FROM bb GROUP BY k__, v__"
    )

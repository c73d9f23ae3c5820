"""Small answers a source gives beside the reduction, each one query in the engine:
threshold tallies (drift, range), a fingerprint of the relation, and a capped fetch of a
few named columns for the checks that need rows (covariates).

Tallies and sums are per column; only ``fetch`` returns rows, and never more than its cap.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Callable, Mapping, Sequence
from typing import Any, Protocol

import numpy as np
import pandas as pd

from tui.intake.sources.base import SourceColumn
from tui.intake.sources.dialect import Dialect
from tui.problems import InputProblem


class SqlReduction(Protocol):
    """What these lookups read of ``reduce.SqlReduction`` (the outcome coded first)."""

    dialect: Dialect
    run: Callable[[str], list[tuple[Any, ...]]]
    relation: str
    columns: dict[str, SourceColumn]
    outcome_name: str
    _outcome: str

    def _base(self, numeric: Sequence[SourceColumn]) -> str: ...


SUM_DIGITS = 10
"""Significant digits of each column sum kept in the fingerprint: engines add in their own
order, so the last digits of a float sum differ between them and between runs."""


def tally(
    reduction: SqlReduction, thresholds: Mapping[str, Sequence[float]]
) -> dict[str, tuple[int, np.ndarray, np.ndarray]]:
    """Per column: finite rows with an outcome, and how many of them lie below and at or
    below each threshold (one query for every column)."""
    names = list(thresholds)
    if not names:
        return {}
    numeric = [reduction.columns[n] for n in names]
    d = reduction.dialect
    parts = []
    for i, name in enumerate(names):
        c = f"c{i}__"
        parts.append(f"COUNT({c})")
        for t in thresholds[name]:
            v = d.number(float(t))
            parts += [
                f"SUM(CASE WHEN {c} < {v} THEN 1 ELSE 0 END)",
                f"SUM(CASE WHEN {c} <= {v} THEN 1 ELSE 0 END)",
            ]
    row = reduction.run(f"{reduction._base(numeric)}SELECT {', '.join(parts)} FROM b")[0]
    out, at = {}, 0
    for name in names:
        k = len(thresholds[name])
        values = [int(v or 0) for v in row[at : at + 1 + 2 * k]]
        at += 1 + 2 * k
        out[name] = (values[0], np.array(values[1::2]), np.array(values[2::2]))
    return out


def fingerprint(reduction: SqlReduction, names: Sequence[str]) -> tuple[int, str]:
    """(rows with an outcome, SHA-256 hex) of the relation: the hash of the JSON text
    ``[rows, events, [[name, finite count, sum to SUM_DIGITS digits], ...]]`` over the
    named numeric columns in the order given, every figure computed by the engine."""
    numeric = [reduction.columns[n] for n in names if reduction.columns[n].numeric]
    parts = ["COUNT(*)", "SUM(y__)"]
    for i in range(len(numeric)):
        parts += [f"COUNT(c{i}__)", f"SUM(c{i}__)"]
    row = reduction.run(f"{reduction._base(numeric)}SELECT {', '.join(parts)} FROM b")[0]
    rows, events = int(row[0]), int(row[1] or 0)
    columns = []
    for i, c in enumerate(numeric):
        count, total = int(row[2 + 2 * i]), row[3 + 2 * i]
        shown = None if total is None else float(f"{float(total):.{SUM_DIGITS}g}")
        columns.append([c.name, count, shown])
    text = json.dumps([rows, events, columns], separators=(",", ":"))
    return rows, hashlib.sha256(text.encode()).hexdigest()


def fetch(reduction: SqlReduction, names: Sequence[str], cap: int, label: str) -> pd.DataFrame:
    """The outcome and the named columns of every row with an outcome, as stored; refused
    (one line naming the cap) when there are more than ``cap`` such rows."""
    d = reduction.dialect
    outcome = reduction._outcome
    rows = int(
        reduction.run(
            f"SELECT COUNT(*) FROM {reduction.relation} AS s WHERE {outcome} IS NOT NULL"
        )[0][0]
    )
    if rows > cap:
        raise InputProblem(
            f"{label}: this command needs the rows of {len(names)} column(s), and {rows:,} rows "
            f"exceed the row cap of {cap:,}; raise --row-cap or narrow the data with --query"
        )
    wanted = list(dict.fromkeys(names))
    cols = ", ".join([f"{outcome}"] + [d.quote(n) for n in wanted if d.quote(n) != outcome])
    answer = reduction.run(
        f"SELECT {cols} FROM {reduction.relation} AS s WHERE {outcome} IS NOT NULL"
    )
    header = [reduction.outcome_name] + [n for n in wanted if n != reduction.outcome_name]
    return pd.DataFrame.from_records(answer, columns=header)

"""The pushed-down reduction: a few batched queries, whatever the number of columns.

1. outcome levels with their row counts (``code``);
2. one profile row: per column finite rows, distinct values, min, max, non-whole and
   infinite counts (non-numeric columns: present rows, events, distinct values);
3. one GROUPING SETS query: rows and events per distinct value of every exactly reduced
   column;
4. for binned columns, one query of order statistics and the quantile grid, one of the
   smallest gaps, and one GROUPING SETS query of rows, events and summed x per bin. DuckDB
   and PostgreSQL instead sort each binned column once (``sorted_pass.py``) and count its
   bins one column a query (DuckDB by an ASOF join, ``bin_join.py``); Spark takes the
   quantiles from sketches, a few columns a query, and counts bins, gaps and distinct
   values one column a query over the bin numbers its ``Bucketizer`` finds
   (``bucket_pass.py``). DuckDB from ``sketch_from`` rows on: one GROUP BY a column over
   a fine lattice of its range (``lattice_pass.py``), else two scans for all binned
   columns, approximate quantiles and exact bin counts (``sketch_pass.py``).

Every answer is per column, per distinct value or per bin; no row leaves the engine.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from typing import Any

import numpy as np
import pandas as pd

from tui.intake.outcome import _ordered, _show, code_outcome
from tui.intake.sources import (
    bin_join,
    bins,
    bucket_pass,
    lattice_pass,
    lookups,
    sketch_pass,
    sorted_pass,
)
from tui.intake.sources.base import (
    BinPlan,
    OtherColumn,
    PushedColumn,
    SourceColumn,
    SourceOutcome,
)
from tui.intake.sources.dialect import Dialect
from tui.problems import InputProblem

Run = Callable[[str], list[tuple[Any, ...]]]
"""Runs one statement and returns every row of its answer."""
Bucketize = Callable[[str, str, np.ndarray], tuple[str, str]]
"""(statement with CTE ``b``, column, bin starts) -> (relation holding b's columns and the
bin number, that number's column): the engine's own bucket search (``bucket_pass.py``)."""


class SqlReduction:
    """The reduction of one relation (table or query) through one engine's SQL."""

    def __init__(
        self,
        dialect: Dialect,
        run: Run,
        relation: str,
        columns: Sequence[SourceColumn],
        bucketize: Bucketize | None = None,
        sketch_from: int | None = None,
        arrays: lattice_pass.Arrays | None = None,
    ) -> None:
        self.dialect, self.run, self.relation = dialect, run, relation
        self.bucketize = bucketize
        self.sketch_from = sketch_from
        """From this many rows with an outcome, binned columns are counted on a lattice
        (``lattice_pass.py``, with ``arrays``) or sketched (``sketch_pass.py``), both
        approximate; None: always the exact passes."""
        self.arrays = arrays
        """Runs a statement and returns its answer's columns as arrays (the lattice's
        answers have up to a quarter of a million rows)."""
        self.columns = {c.name: c for c in columns}
        self._y = ""
        self._outcome = ""
        self.outcome_name = ""

    def code(self, column: str, event: str | None) -> SourceOutcome:
        """Code the outcome by the file rules, from its levels and their counts."""
        names = list(self.columns)
        if column not in names:
            code_outcome(pd.DataFrame(columns=names), column, event)  # raises the message
        q = self.dialect.quote(column)
        total, present, distinct = self.run(
            f"SELECT COUNT(*), COUNT({q}), COUNT(DISTINCT {q}) FROM {self.relation} AS s"
        )[0]
        if distinct > 2:
            shown = self.run(
                f"SELECT {q} FROM {self.relation} AS s WHERE {q} IS NOT NULL "
                f"GROUP BY {q} ORDER BY {q} LIMIT 6"
            )
            ordered = _ordered({row[0]: row[0] for row in shown})
            listed = ", ".join(_show(v) for v in ordered[:5])
            raise InputProblem(
                f"outcome column '{column}' has {distinct} distinct values ({listed}, ...); "
                "it needs exactly two"
                if distinct > 5
                else f"outcome column '{column}' has {distinct} distinct values ({listed}); "
                "it needs exactly two"
            )
        levels = self.run(
            f"SELECT {q}, COUNT(*) FROM {self.relation} AS s WHERE {q} IS NOT NULL GROUP BY {q}"
        )
        frame = pd.DataFrame({column: [level for level, _ in levels]})
        coded = code_outcome(frame, column, event)  # the file's messages and event choice
        counts = np.array([int(n) for _, n in levels], dtype=np.int64)
        events = int(counts[coded.y == 1].sum())
        raw = next(level for (level, _), flag in zip(levels, coded.y, strict=True) if flag)
        self._outcome, self.outcome_name = q, column
        self._y = f"CASE WHEN {q} = {self.dialect.literal(raw)} THEN 1 ELSE 0 END"
        return SourceOutcome(column, coded.event, events, int(present) - events, total - present)

    def _finite(self, column: SourceColumn) -> str:
        d = self.dialect
        x = d.as_double(d.quote(column.name), column)
        return f"CASE WHEN {x} > {d.number(-np.inf)} AND {x} < {d.number(np.inf)} THEN {x} END"

    def _base(self, numeric: Sequence[SourceColumn]) -> str:
        """Rows with an outcome: y and each column's finite value (NULL otherwise)."""
        parts = [f"{self._y} AS y__"] + [
            f"{self._finite(c)} AS c{i}__" for i, c in enumerate(numeric)
        ]
        return (
            f"WITH b AS (SELECT {', '.join(parts)} FROM {self.relation} AS s "
            f"WHERE {self._outcome} IS NOT NULL) "
        )

    def reduce(
        self, outcome: SourceOutcome, names: Sequence[str], plan: BinPlan
    ) -> tuple[list[PushedColumn], list[OtherColumn]]:
        """Reduce the named columns; numeric ones to counts, the others to a listing."""
        if not self._y:
            raise RuntimeError("code the outcome before reducing")
        chosen = [self.columns[n] for n in names]
        numeric = [c for c in chosen if c.numeric]
        other = [c for c in chosen if not c.numeric]
        profile = self._profile(numeric, other)
        listing = [
            OtherColumn(c.name, outcome.rows, int(p), int(e or 0), int(k))
            for c, (p, e, k) in zip(other, profile[len(numeric) :], strict=True)
        ]
        if not numeric:
            return [], listing
        stats = [list(row) for row in profile[: len(numeric)]]
        # With an estimated distinct count, columns up to twice the bound are counted per
        # value first; their true count then decides, as the sort decides for the others.
        bound = plan.max_levels * (2 if self.dialect.approx_distinct else 1)
        exact = [i for i, (n, k, *_) in enumerate(stats) if k <= bound or n < plan.exact_below]
        base = self._base(numeric)
        tables = self._exact_counts(base, exact)
        binned = [i for i in range(len(numeric)) if i not in set(exact)]
        if self.dialect.approx_distinct:
            for i in exact:
                stats[i][1] = tables[i][0].size
            many = [i for i in exact if _binned_by(stats[i], plan)]
            exact = [i for i in exact if i not in set(many)]
            binned = sorted(binned + many)
        if binned and self.sketch_from is not None and outcome.rows >= self.sketch_from:
            if self.arrays is not None:
                done = lattice_pass.reduce_binned(
                    self.run, self.arrays, base, binned, stats, plan, self.dialect
                )
                tables.update(done)
                binned = [i for i in binned if i not in done]
            if binned:
                tables.update(self._sketched_counts(base, binned, stats, plan))
            binned = []
        order = self._order_stats(base, binned, stats, plan)
        few = [i for i in binned if not _binned_by(stats[i], plan)]  # the estimate was off
        if few:
            tables.update(self._exact_counts(base, few))
            exact = sorted(exact + few)
            binned = [i for i in binned if i not in set(few)]
        step = self.dialect.binned_per_query or max(1, len(binned))
        for at in range(0, len(binned), step):
            tables.update(self._binned_counts(base, binned[at : at + step], stats, plan, order))
        pushed = []
        for i, column in enumerate(numeric):
            n, distinct, low, high, fractional, infinite = stats[i]
            x, trials, events, gap, grid = tables[i]
            pushed.append(
                PushedColumn(
                    column.name,
                    outcome.rows,
                    int(n),
                    int(infinite or 0),
                    bool(n) and not fractional,
                    x,
                    trials,
                    events,
                    i in exact,
                    int(min(distinct, n)),  # an estimate can pass the rows
                    None if low is None else float(low),
                    None if high is None else float(high),
                    gap,
                    grid,
                )
            )
        return pushed, listing

    def _profile(
        self, numeric: Sequence[SourceColumn], other: Sequence[SourceColumn]
    ) -> list[tuple[Any, ...]]:
        d = self.dialect
        # Each value is cast and tested once in the inner select; the aggregates read it.
        inner, parts = [f"{self._y} AS y__"], []
        for i, c in enumerate(numeric):
            inner += [
                f"{d.as_double(d.quote(c.name), c)} AS r{i}__",
                f"{self._finite(c)} AS c{i}__",
            ]
            f, x = f"c{i}__", f"r{i}__"
            distinct = f"{d.approx_distinct}({f})" if d.approx_distinct else f"COUNT(DISTINCT {f})"
            parts += [
                f"COUNT({f})",
                distinct,
                f"MIN({f})",
                f"MAX({f})",
                f"SUM(CASE WHEN {f} <> FLOOR({f}) THEN 1 ELSE 0 END)",
                f"SUM(CASE WHEN {x} = {d.number(np.inf)} OR {x} = {d.number(-np.inf)} "
                "THEN 1 ELSE 0 END)",
            ]
        for j, c in enumerate(other):
            inner.append(f"{d.quote(c.name)} AS o{j}__")
            q = f"o{j}__"
            parts += [
                f"COUNT({q})",
                f"SUM(CASE WHEN {q} IS NOT NULL THEN y__ ELSE 0 END)",
                f"COUNT(DISTINCT {q})",
            ]
        row = self.run(
            f"SELECT {', '.join(parts)} FROM (SELECT {', '.join(inner)} FROM {self.relation} "
            f"AS s WHERE {self._outcome} IS NOT NULL) AS p"
        )[0]
        out: list[tuple[Any, ...]] = [tuple(row[6 * i : 6 * i + 6]) for i in range(len(numeric))]
        start = 6 * len(numeric)
        out += [tuple(row[start + 3 * j : start + 3 * j + 3]) for j in range(len(other))]
        return out

    def _grouped(self, base: str, keys: list[list[str]], extra: Sequence[str] = ()) -> list[tuple]:
        """One GROUPING SETS query; each answer row is tagged by the set it belongs to."""
        flat = [k for ks in keys for k in ks]
        sets = ", ".join("(" + ", ".join(ks) + ")" for ks in keys)
        rows = self.run(
            f"{base}SELECT {', '.join(flat)}, COUNT(*), SUM(y__){''.join(', ' + e for e in extra)} "
            f"FROM b GROUP BY GROUPING SETS ({sets})"
        )
        return rows

    def _exact_counts(self, base: str, exact: list[int]) -> dict[int, tuple]:
        empty = np.zeros(0)
        out: dict[int, tuple] = {i: (empty, empty, empty, None, None) for i in exact}
        if not exact:
            return out
        found: dict[int, list[tuple[float, float, float]]] = {i: [] for i in exact}
        for row in self._grouped(base, [[f"c{i}__"] for i in exact]):
            n, e = row[len(exact)], row[len(exact) + 1]
            for slot, i in enumerate(exact):
                if row[slot] is not None:
                    found[i].append((float(row[slot]), float(n), float(e)))
                    break
        for i, triples in found.items():
            if triples:
                triples.sort()
                x, t, e = (np.array(v, dtype=float) for v in zip(*triples, strict=True))
                out[i] = (x, t, e, None, None)
        return out

    def _order_stats(
        self, base: str, binned: list[int], stats: list[list[Any]], plan: BinPlan
    ) -> dict[int, tuple[np.ndarray, np.ndarray, float | None]]:
        """Per binned column: values at the bins' sorted positions, the quantile grid and
        the smallest gap; with a sorted pass, also its true distinct count (into stats)."""
        if not binned:
            return {}
        d = self.dialect
        out: dict[int, tuple[np.ndarray, np.ndarray, float | None]] = {}
        if d.sorted_pass:
            for i in binned:
                got = sorted_pass.sorted_stats(self.run, base, f"c{i}__", int(stats[i][0]), plan, d)
                stats[i][1] = got.distinct
                out[i] = (got.order, got.grid, got.gap)
            return out
        grid_probs = np.linspace(0.0, 1.0, plan.grid)
        step = d.quantiles_per_query or len(binned)
        answer: list[Any] = []
        for at in range(0, len(binned), step):
            parts = []
            for i in binned[at : at + step]:
                n = int(stats[i][0])
                parts.append(d.order_stats(f"c{i}__", bins.order_probabilities(n, plan)))
                parts.append(d.quantiles(f"c{i}__", grid_probs))
            answer += list(self.run(f"{base}SELECT {', '.join(parts)} FROM b")[0])
        if self.bucketize is not None:  # gaps and distinct counts come with the bin counts
            for slot, i in enumerate(binned):
                order_at, grid = (np.asarray(answer[2 * slot + j], dtype=float) for j in (0, 1))
                out[i] = (order_at, grid, None)
            return out
        gaps = self.run(
            base
            + "SELECT "
            + ", ".join(
                f"(SELECT MIN(d__) FROM (SELECT c{i}__ - LAG(c{i}__) OVER (ORDER BY c{i}__) "
                f"AS d__ FROM b WHERE c{i}__ IS NOT NULL) w WHERE d__ > 0)"
                for i in binned
            )
        )[0]
        for slot, i in enumerate(binned):
            gap = gaps[slot]
            out[i] = (
                np.asarray(answer[2 * slot], dtype=float),
                np.asarray(answer[2 * slot + 1], dtype=float),
                None if gap is None else float(gap),
            )
        return out

    def _sketched_counts(
        self, base: str, binned: list[int], stats: list[list[Any]], plan: BinPlan
    ) -> dict[int, tuple]:
        """Binned columns by two scans for all of them (``sketch_pass.py``)."""
        d = self.dialect
        step = sketch_pass.COLUMNS_PER_QUERY
        answer: list[Any] = []
        for at in range(0, len(binned), step):
            parts = [
                p
                for i in binned[at : at + step]
                for p in sketch_pass.sketch_parts(f"c{i}__", plan, d)
            ]
            answer += list(self.run(f"{base}SELECT {', '.join(parts)} FROM b")[0])
        sketch, start = {}, {}
        for slot, i in enumerate(binned):
            sketch[i] = sketch_pass.read_sketch(answer[3 * slot : 3 * slot + 3], plan)
            n, _, low, high, *_ = stats[i]
            start[i] = sketch_pass.starts(int(n), plan, sketch[i], float(low), float(high))
        answer = []
        for at in range(0, len(binned), step):
            parts = [
                p
                for i in binned[at : at + step]
                for p in sketch_pass.histogram_parts(f"c{i}__", start[i], sketch[i], d)
            ]
            answer += list(self.run(f"{base}SELECT {', '.join(parts)} FROM b")[0])
        out = {}
        for slot, i in enumerate(binned):
            rows, events = answer[2 * slot], answer[2 * slot + 1]
            x, t, e = sketch_pass.read_bins(rows, events, start[i], sketch[i])
            gap = sketch_pass.smallest_gap(sketch[i])
            out[i] = (x, t, e, gap, sketch[i].grid)
        return out

    def _binned_counts(
        self,
        base: str,
        binned: list[int],
        stats: list[list[Any]],
        plan: BinPlan,
        order: dict[int, tuple[np.ndarray, np.ndarray, float | None]],
    ) -> dict[int, tuple]:
        d = self.dialect
        cut: dict[int, bins.Cuts] = {}
        for i in binned:
            n, _, low, high, *_ = stats[i]
            cut[i] = bins.cuts(int(n), plan, order[i][0], float(low), float(high))
        if self.bucketize is not None:  # one query a column over the engine's bin numbers
            out = {}
            for i in binned:
                relation, key = self.bucketize(base, f"c{i}__", cut[i].edges)
                sql = bucket_pass.bucket_pass_query(
                    relation, f"c{i}__", key, cut[i].low_tail, cut[i].high_tail, d
                )
                x, t, e, gap, distinct = bucket_pass.read_bucket_pass(self.run(sql))
                stats[i][1] = distinct
                out[i] = (x, t, e, gap, order[i][1])
            return out
        found: dict[int, list[tuple[float, float, float]]] = {i: [] for i in binned}
        if d.asof_bins:  # one statement a column, each joined to its own bin starts
            for i in binned:
                c = cut[i]
                n, distinct = int(stats[i][0]), int(stats[i][1])
                few = distinct * bin_join.GROUPED_SHARE <= n
                sql = bin_join.bin_counts_query(
                    base, f"c{i}__", c.low_tail, c.high_tail, c.edges, d, few
                )
                _collect(self.run(sql), [i], found)
        else:
            _collect(self.run(self._bucket_query(base, binned, cut)), binned, found)
        out = {}
        for i in binned:
            triples = sorted(found[i])
            x, t, e = (np.array(v, dtype=float) for v in zip(*triples, strict=True))
            out[i] = (x, t, e, order[i][2], order[i][1])
        return out

    def _bucket_query(self, base: str, binned: list[int], cut: dict[int, bins.Cuts]) -> str:
        """One GROUPING SETS statement over ``binned``, each row's bin by ``Dialect.bucket``."""
        d = self.dialect
        keys, sums, selects = [], [], []
        for i in binned:
            c = f"c{i}__"
            lo, hi = d.number(cut[i].low_tail), d.number(cut[i].high_tail)
            tail = f"{c} < {lo} OR {c} >= {hi}"
            selects.append(
                f"CASE WHEN {c} IS NULL THEN NULL WHEN {tail} THEN -1 "
                f"ELSE {d.bucket(c, cut[i].edges)} END AS k{i}__"
            )
            selects.append(f"CASE WHEN {tail} THEN {c} END AS v{i}__")
            keys.append([f"k{i}__", f"v{i}__"])
            sums.append(f"SUM({c})")
        inner = base.rstrip() + f", bb AS (SELECT y__, {', '.join(f'c{i}__' for i in binned)}, "
        inner += ", ".join(selects) + " FROM b) "
        flat = [k for ks in keys for k in ks]
        sets = ", ".join("(" + ", ".join(ks) + ")" for ks in keys)
        return (
            f"{inner}SELECT {', '.join(flat)}, COUNT(*), SUM(y__), {', '.join(sums)} "
            f"FROM bb GROUP BY GROUPING SETS ({sets})"
        )


def _collect(
    rows: list[tuple], binned: list[int], found: dict[int, list[tuple[float, float, float]]]
) -> None:
    """(x, rows, events) per bin from answer rows laid out as (bin, tail value) per column,
    then rows, events and summed x per column: a tail value is its own x, a bin's x is its
    mean."""
    width = 2 * len(binned)
    for row in rows:
        for slot, i in enumerate(binned):
            k, v = row[2 * slot], row[2 * slot + 1]
            if k is None:
                continue
            n, e = float(row[width]), float(row[width + 1])
            x = float(v) if v is not None else float(row[width + 2 + slot]) / n
            found[i].append((x, n, e))
            break


def _binned_by(stats: Sequence[Any], plan: BinPlan) -> bool:
    """A file scan bins a column with more values than the bound and enough rows."""
    n, distinct = int(stats[0]), int(stats[1])
    return distinct > plan.max_levels and n >= plan.exact_below


class ReducedInEngine:
    """What every SQL source answers the same way once it has listed its columns
    (``_columns``) and set up its ``SqlReduction`` (``_reduction``)."""

    _columns: list[SourceColumn]
    _reduction: SqlReduction
    label: str

    def columns(self) -> list[SourceColumn]:
        return list(self._columns)

    def code_outcome(self, column: str, event: str | None) -> SourceOutcome:
        return self._reduction.code(column, event)

    def reduce(
        self, outcome: SourceOutcome, names: list[str], plan: BinPlan
    ) -> tuple[list[PushedColumn], list[OtherColumn]]:
        return self._reduction.reduce(outcome, names, plan)

    def tally(
        self, thresholds: Mapping[str, Sequence[float]]
    ) -> dict[str, tuple[int, np.ndarray, np.ndarray]]:
        return lookups.tally(self._reduction, thresholds)

    def fingerprint(self, names: Sequence[str]) -> tuple[int, str]:
        return lookups.fingerprint(self._reduction, names)

    def fetch(self, names: Sequence[str], cap: int) -> pd.DataFrame:
        return lookups.fetch(self._reduction, names, cap, self.label)

"""DuckDB bin counts of one binned column: the per-row CASE tree (``Dialect.bucket``)
against the ASOF join to the bin starts (``bin_join.py``), of the rows and of the distinct
values counted first (grouped), same cuts, same run.

The column is a Parquet file's (``--file``; by default a 10,000,000-row invented column
written with numpy into ``--data`` and kept there). Its profile and sorted pass run first
to get the cuts, exactly as ``bendwise scan --engine duckdb`` gets them; then each way of
counting runs ``--repeat`` times, one after the other, with the load average beside every
figure (the machine is shared), and the answers are checked equal row for row.
"""

from __future__ import annotations

import argparse
import os
import sys
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
if str(REPO) not in sys.path:  # run as a script from anywhere
    sys.path.insert(0, str(REPO))

import duckdb  # noqa: E402
import numpy as np  # noqa: E402

from benchmarks.results import recorded  # noqa: E402
from tui.engine.pushed import bin_plan  # noqa: E402
from tui.intake.sources import bin_join, bins, sorted_pass  # noqa: E402
from tui.intake.sources.duckdb_source import open_file_through_duckdb  # noqa: E402


def _load() -> str:
    one, five, fifteen = os.getloadavg()
    return f"load average {one:.2f}, {five:.2f}, {fifteen:.2f}"


def invented_column(folder: Path, rows: int) -> Path:
    """A skewed, rounded (so tied) column with missing values and an outcome; invented."""
    import pandas as pd

    path = folder / f"bins_{rows}.parquet"
    if path.exists():
        return path
    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(2026)
    x = np.round(rng.lognormal(3.0, 0.8, rows), 2)
    x[rng.random(rows) < 0.02] = np.nan
    y = (rng.random(rows) < 1 / (1 + np.exp(-(np.log1p(np.nan_to_num(x)) - 3)))).astype("int8")
    pd.DataFrame({"y": y, "x": x}).to_parquet(str(path) + ".part", index=False)
    os.replace(str(path) + ".part", path)
    return path


def compare(path: Path, name: str, outcome: str, ways: list[str], repeat: int) -> bool:
    """Time each way of counting one column's bins; True when their answers agree."""
    source = open_file_through_duckdb(str(path))
    try:
        red = source._reduction
        red.code(outcome, None)
        column = red.columns[name]
        base, plan = red._base([column]), bin_plan()
        n, _, low, high, *_ = red._profile([column], [])[0]
        start = time.perf_counter()
        got = sorted_pass.sorted_stats(red.run, base, "c0__", int(n), plan)
        cut = bins.cuts(int(n), plan, got.order, float(low), float(high))
        took = time.perf_counter() - start
        print(f"{path.name} column {name}: {int(n):,} finite rows, {cut.edges.size} bin "
              f"starts; sorted pass {took:.2f} s; {_load()}", flush=True)  # fmt: skip
        statements = {
            "tree": red._bucket_query(base, [0], {0: cut}),
            "asof": bin_join.bin_counts_query(
                base, "c0__", cut.low_tail, cut.high_tail, cut.edges, source.dialect
            ),
            "grouped": bin_join.bin_counts_query(
                base, "c0__", cut.low_tail, cut.high_tail, cut.edges, source.dialect, True
            ),
        }
        answers = {}
        for _ in range(repeat):
            for way in ways:
                start = time.perf_counter()
                rows = red.run(statements[way])
                took = time.perf_counter() - start
                print(f"  {way:7s} {took:7.2f} s, {len(rows)} rows; {_load()}", flush=True)
                answers[way] = sorted(tuple(r[:4]) for r in rows if r[0] is not None)
    finally:
        source.close()
    if "tree" not in answers:
        return True
    same = all(a == answers["tree"] for a in answers.values())
    print(f"  same rows and events per bin in every way: {'yes' if same else 'NO'}")
    return same


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--file", type=Path, help="a Parquet file (default: invented)")
    parser.add_argument("--column", action="append", help="column(s) to bin (default x)")
    parser.add_argument("--outcome", default="y")
    parser.add_argument("--rows", type=int, default=10_000_000)
    parser.add_argument("--data", type=Path, default=Path("/tmp/bendwise-bench-bins"))
    parser.add_argument("--repeat", type=int, default=1)
    parser.add_argument("--only", choices=["tree", "asof", "grouped"], help="one way of counting")
    parser.add_argument("--results", type=Path, help="results file (default in results/)")
    args = parser.parse_args(argv)
    path = args.file or invented_column(args.data, args.rows)
    ways = [args.only] if args.only else ["tree", "asof", "grouped"]
    with recorded("duckdb_bins", args.results):
        print(f"DuckDB {duckdb.__version__}; {_load()}")
        for name in args.column or ["x"]:
            if not compare(path, name, args.outcome, ways, args.repeat):
                raise SystemExit(f"the two ways disagree on {name}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

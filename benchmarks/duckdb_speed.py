"""Large files through DuckDB: `bendwise scan FILE --engine duckdb` against loading the same
file with pandas, for Parquet and CSV.

The invented extract (``synthetic.py``; 10,000,000 rows x 20 columns by default) is written
once as Parquet and, by DuckDB, as CSV into ``--data`` (kept between runs: writing them
takes minutes). Each measured step runs in its own process under ``memory.py``: wall time,
largest resident set of one process and peak summed PSS of the process tree. The pandas
load (``pd.read_parquet`` / ``pd.read_csv``, nothing else) runs right before the scan of
the same file, with the load average printed beside every figure: the machine is shared.
``--per-query`` also prints the time of every statement the reduction sends to DuckDB.
From 2,000,000 rows the DuckDB scan sketches binned columns (approximate quantiles,
``tui/intake/sources/sketch_pass.py``); ``--error`` also runs the file scan (numpy/pandas,
exact bins) of the Parquet file and prints how far each score of each DuckDB scan lies from
it, and whether the ranking is the same.
"""

from __future__ import annotations

import argparse
import json
import os
import shlex
import sys
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
if str(REPO) not in sys.path:  # run as a script from anywhere
    sys.path.insert(0, str(REPO))

from benchmarks.memory import Measured, run_measured  # noqa: E402
from benchmarks.results import recorded  # noqa: E402
from benchmarks.synthetic import OUTCOME, make_extract  # noqa: E402

TARGET_MIB = 1024


def _load() -> str:
    one, five, fifteen = os.getloadavg()
    return f"load average {one:.2f}, {five:.2f}, {fifteen:.2f}"


def write_data(folder: Path, rows: int, cols: int) -> tuple[Path, Path]:
    """The extract as Parquet and CSV in ``folder`` (reused when already there)."""
    import duckdb

    folder.mkdir(parents=True, exist_ok=True)
    parquet = folder / f"extract_{rows}x{cols}.parquet"
    csv = parquet.with_suffix(".csv")
    if not parquet.exists():
        frame, _ = make_extract(rows, cols)
        frame.to_parquet(str(parquet) + ".part", index=False)
        del frame
        os.replace(str(parquet) + ".part", parquet)
    if not csv.exists():
        part = str(csv) + ".part"
        duckdb.sql(f"COPY (SELECT * FROM read_parquet('{parquet}')) TO '{part}' (HEADER)")
        os.replace(part, csv)
    return parquet, csv


def _shown(m: Measured) -> str:
    pss = "n/a" if m.peak_pss_mb is None else f"{m.peak_pss_mb:,.0f} MiB"
    return f"{m.seconds:7.1f} s, max RSS {m.max_rss_mb:,.0f} MiB, peak tree PSS {pss}"


def _pandas_load(path: Path) -> list[str]:
    reader = "read_parquet" if path.suffix == ".parquet" else "read_csv"
    code = f"import pandas as pd; pd.{reader}({str(path)!r})"
    return [sys.executable, "-c", code]


def _scan(path: Path, out: Path, engine: bool = True) -> list[str]:
    """The scan, its JSON written to ``out`` (a shell around it, counted in the tree)."""
    scan = [sys.executable, "-m", "tui", "scan", str(path), "--outcome", OUTCOME,
            "--format", "json"] + (["--engine", "duckdb"] if engine else [])  # fmt: skip
    return ["sh", "-c", f"{shlex.join(scan)} > {shlex.quote(str(out))}"]


def score_error(got: Path, want: Path) -> None:
    """Per column, the DuckDB scan's score against the file scan's; then the largest."""
    a = {r["column"]: r for r in json.loads(got.read_text())}
    b = {r["column"]: r for r in json.loads(want.read_text())}
    worst_rel = worst_abs = 0.0
    for name, ref in b.items():
        x, y = a[name]["score"], ref["score"]
        if x is None or y is None:
            print(f"    {name:<18} score {x} vs {y}")
            continue
        rel = abs(x - y) / max(abs(y), 1e-12)
        worst_rel, worst_abs = max(worst_rel, rel), max(worst_abs, abs(x - y))
        print(f"    {name:<18} {x:14.3f} vs file {y:14.3f}  abs {abs(x - y):9.4f}  rel {rel:.2e}")
    same = [r["column"] for r in json.loads(got.read_text())] == list(b)
    within = all(
        a[n]["score"] is not None
        and abs(a[n]["score"] - r["score"]) <= max(0.5, 0.02 * abs(r["score"]))
        for n, r in b.items()
        if r["score"] is not None
    )
    print(f"  score error: largest rel {worst_rel:.2e}, largest abs {worst_abs:.4f}; "
          f"ranking {'same' if same else 'DIFFERENT'}; "
          f"{'within' if within else 'OUTSIDE'} 2% or 0.5")  # fmt: skip


def compare(path: Path, out: Path) -> tuple[Measured, Measured]:
    """The pandas load, then the DuckDB scan of the same file, one right after the other."""
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    kind = path.suffix.lstrip(".")
    print(f"{kind}: {path.name} ({path.stat().st_size / 2**20:,.0f} MiB)")
    print(f"  start: {_load()}")
    loaded = run_measured(_pandas_load(path), env)
    print(f"  pandas load:          {_shown(loaded)}; {_load()}")
    scanned = run_measured(_scan(path, out), env)
    if scanned.returncode != 0:
        raise SystemExit(f"bendwise scan failed with status {scanned.returncode}")
    print(f"  bendwise scan duckdb: {_shown(scanned)}; {_load()}")
    peak = scanned.peak_pss_mb or scanned.max_rss_mb
    print(f"  scan / load time: {scanned.seconds / loaded.seconds:.2f}; "
          f"scan memory {'within' if peak <= TARGET_MIB else 'above'} {TARGET_MIB:,} MiB; "
          f"time {'under' if scanned.seconds < loaded.seconds else 'over'} the load")  # fmt: skip
    return loaded, scanned


def per_query(path: Path) -> None:
    """Every statement of the reduction with its time (this process, not measured)."""
    from tui.engine.pushed import bin_plan
    from tui.intake.sources.duckdb_source import open_file_through_duckdb

    start = time.perf_counter()
    source = open_file_through_duckdb(str(path))
    print(f"  open{' and stage' if path.suffix != '.parquet' else ''}: "
          f"{time.perf_counter() - start:.1f} s; {_load()}")  # fmt: skip
    run = source._reduction.run

    def timed(sql: str):
        began = time.perf_counter()
        answer = run(sql)
        what = " ".join(sql.split())[:70]
        print(f"  {time.perf_counter() - began:6.2f} s  {what}...; {_load()}")
        return answer

    arrays = source._reduction.arrays

    def timed_arrays(sql: str):
        began = time.perf_counter()
        answer = arrays(sql)  # type: ignore[misc]
        what = " ".join(sql.split())[-70:]
        print(f"  {time.perf_counter() - began:6.2f} s  ...{what}; {_load()}")
        return answer

    source._reduction.run = timed
    if arrays is not None:
        source._reduction.arrays = timed_arrays
    try:
        outcome = source.code_outcome(OUTCOME, None)
        names = [c.name for c in source.columns() if c.name != OUTCOME]
        source.reduce(outcome, names, bin_plan())
    finally:
        source.close()


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=10_000_000)
    parser.add_argument("--cols", type=int, default=20)
    parser.add_argument("--data", type=Path, default=Path("/tmp/bendwise-duckdb-bench"),
                        help="folder for the Parquet and CSV files (kept)")  # fmt: skip
    parser.add_argument("--only", choices=("parquet", "csv"), help="one format")
    parser.add_argument("--per-query", action="store_true", help="time every statement")
    parser.add_argument("--results", type=Path, help="results file (default in results/)")
    parser.add_argument("--error", action="store_true",
                        help="scores against the file scan of the Parquet file")  # fmt: skip
    args = parser.parse_args()
    with recorded("duckdb_speed", args.results):
        print(f"{args.rows:,} rows x {args.cols} columns, invented extract; {_load()}")
        parquet, csv = write_data(args.data, args.rows, args.cols)
        reference = args.data / f"file_scan_{parquet.stem}.json"
        if args.error:
            env = {**os.environ, "PYTHONPATH": str(REPO)}
            filed = run_measured(_scan(parquet, reference, engine=False), env)
            print(f"file scan (numpy/pandas) of {parquet.name}: {_shown(filed)}; {_load()}")
        for path in (parquet, csv):
            if args.only and path.suffix.lstrip(".") != args.only:
                continue
            out = args.data / f"duckdb_scan_{path.name}.json"
            compare(path, out)
            if args.error:
                score_error(out, reference)
            if args.per_query:
                per_query(path)


if __name__ == "__main__":
    main()

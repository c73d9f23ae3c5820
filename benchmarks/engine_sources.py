"""The invented extract scanned where it lives: PostgreSQL and Spark local mode against the
file scan of the same data.

    python benchmarks/engine_sources.py --rows 100000 --cols 10 --results /tmp/trial.md
    python benchmarks/engine_sources.py --workdir /tmp/engbench     # 1,000,000 x 50

The extract (``synthetic.py``, fixed seed) is written once as Parquet into ``--workdir``
(reused when there). Then, each in its own process, with the load average beside each figure:

1. ``bendwise scan FILE.parquet --format json``: wall time;
2. a throwaway PostgreSQL cluster (``tests/pg_server.py``: temporary folder, free port on
   127.0.0.1, stopped and deleted at the end, also on error): the table created and filled
   with COPY ... FORMAT csv from a CSV of the same data (the CSV written by DuckDB, not
   timed; the COPY and ANALYZE timed on their own), then ``bendwise scan postgresql://...
   --table NAME``: wall time;
3. ``bendwise scan spark:FILE.parquet --spark-master MASTER`` with SPARK_LOCAL_IP=127.0.0.1:
   wall time; a run longer than ``--timeout`` is stopped (its whole process group) and said so;
4. each source against the file scan: largest relative and absolute score difference,
   Spearman's rank correlation of the scores, whether the top-10 sets agree, and how many
   best forms differ.

Writes its printout to benchmarks/results/engine_sources.md (``--results`` to write elsewhere).
"""

from __future__ import annotations

import argparse
import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
from scipy import stats

REPO = Path(__file__).resolve().parent.parent
for extra in (REPO, REPO / "tests"):  # run as a script from anywhere; pg_server lives in tests
    if str(extra) not in sys.path:
        sys.path.insert(0, str(extra))

from benchmarks.results import recorded, results_path  # noqa: E402
from benchmarks.synthetic import OUTCOME, make_extract  # noqa: E402

TOP = 10
TABLE = "pump_months"
DATABASE = "bench"


def _load() -> str:
    one, five, fifteen = os.getloadavg()
    return f"load average {one:.2f}, {five:.2f}, {fifteen:.2f}"


def write_parquet(folder: Path, rows: int, cols: int) -> Path:
    """The extract as Parquet in ``folder`` (reused when already there)."""
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / f"extract_{rows}x{cols}.parquet"
    if not path.exists():
        frame, _ = make_extract(rows, cols)
        frame.to_parquet(str(path) + ".part", index=False)
        del frame
        os.replace(str(path) + ".part", path)
    return path


def write_csv(parquet: Path) -> Path:
    """The same data as CSV (header, empty field for a missing value), reused when there."""
    import duckdb

    path = parquet.with_suffix(".csv")
    if not path.exists():
        part = str(path) + ".part"
        duckdb.sql(f"COPY (SELECT * FROM read_parquet('{parquet}')) TO '{part}' (HEADER)")
        os.replace(part, path)
    return path


class Stalled(RuntimeError):
    """A scan ran past its time limit and was stopped."""


def timed_scan(command: list[str], out: Path, env: dict[str, str], timeout: float) -> float:
    """Run a scan writing JSON to ``out``; its wall time. Past ``timeout`` its whole process
    group (the JVM of a Spark run included) is killed and ``Stalled`` raised."""
    out.unlink(missing_ok=True)
    start = time.perf_counter()
    child = subprocess.Popen(
        [*command, "--format", "json", "--output", str(out)],
        env=env,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        text=True,
        start_new_session=True,
    )
    try:
        _, err = child.communicate(timeout=timeout)
    except subprocess.TimeoutExpired:
        os.killpg(child.pid, signal.SIGKILL)
        child.communicate()
        raise Stalled(f"stopped after {timeout:.0f} s") from None
    finally:
        if child.poll() is None:  # interrupted: leave nothing behind
            os.killpg(child.pid, signal.SIGKILL)
            child.wait()
    seconds = time.perf_counter() - start
    if child.returncode != 0:
        raise RuntimeError(f"scan failed ({child.returncode}): {err.strip()[-2000:]}")
    return seconds


def _scan_command(data: str, *extra: str) -> list[str]:
    return [sys.executable, "-m", "tui", "scan", data, "--outcome", OUTCOME, *extra]


def read_scores(path: Path) -> dict[str, dict]:
    """Column -> its row of a ``--format json`` scan."""
    return {row["column"]: row for row in json.loads(path.read_text(encoding="utf-8"))}


def compare(reference: dict[str, dict], other: dict[str, dict]) -> str:
    """Score agreement of ``other`` with the file scan ``reference``, as one printed block."""
    if set(reference) != set(other):
        missing = sorted(set(reference) ^ set(other))
        return f"   columns differ from the file scan: {missing}"
    names = [c for c in reference if reference[c]["score"] is not None]
    unscored = [c for c in names if other[c]["score"] is None]
    if unscored:
        return f"   no score where the file scan has one: {unscored}"
    a = np.array([reference[c]["score"] for c in names], dtype=float)
    b = np.array([other[c]["score"] for c in names], dtype=float)
    diff = np.abs(b - a)
    rel = diff / np.maximum(np.abs(a), 1e-12)
    worst = names[int(np.argmax(rel))]
    rho = stats.spearmanr(a, b).statistic
    top_a = {names[i] for i in np.argsort(-a)[:TOP]}
    top_b = {names[i] for i in np.argsort(-b)[:TOP]}
    forms = [c for c in names if reference[c]["best_form"] != other[c]["best_form"]]
    same_order = [names[i] for i in np.argsort(-a)] == [names[i] for i in np.argsort(-b)]
    lines = [
        f"   scores against the file scan ({len(names)} columns): largest relative "
        f"difference {rel.max():.3e} ({worst}), largest absolute {diff.max():.3e}",
        f"   Spearman {rho:.6f}; top-{TOP} set {'the same' if top_a == top_b else 'differs'}; "
        f"full ranking {'the same' if same_order else 'differs'}",
        f"   best forms differing: {len(forms)}" + (f" ({', '.join(forms[:5])})" if forms else ""),
    ]
    return "\n".join(lines)


def postgres_run(parquet: Path, out: Path, env: dict[str, str], timeout: float) -> float:
    """Start a cluster, load the data with COPY, scan the table; the cluster is always
    stopped and its folder deleted."""
    import duckdb
    from pg_server import start_server
    from psycopg import sql

    csv = write_csv(parquet)
    schema = duckdb.sql(f"DESCRIBE SELECT * FROM read_parquet('{parquet}')").fetchall()
    kinds = {"DOUBLE": "DOUBLE PRECISION", "TINYINT": "SMALLINT", "BIGINT": "BIGINT"}
    started = time.perf_counter()
    server = start_server()
    try:
        print(f"   cluster up in {time.perf_counter() - started:.1f} s on 127.0.0.1:{server.port}")
        url = server.create_database(DATABASE)
        columns = sql.SQL(", ").join(
            sql.SQL("{} {}").format(sql.Identifier(name), sql.SQL(kinds.get(kind, kind)))
            for name, kind, *_ in schema
        )
        began = time.perf_counter()
        with server.connect(DATABASE) as con:
            con.execute(sql.SQL("CREATE TABLE {} ({})").format(sql.Identifier(TABLE), columns))
            copy_sql = sql.SQL("COPY {} FROM STDIN (FORMAT csv, HEADER true)")
            with (
                con.cursor() as cur,
                cur.copy(copy_sql.format(sql.Identifier(TABLE))) as copy,
                csv.open("rb") as handle,
            ):
                while chunk := handle.read(1 << 20):
                    copy.write(chunk)
            copied = time.perf_counter() - began
            con.execute(sql.SQL("ANALYZE {}").format(sql.Identifier(TABLE)))
            analysed = time.perf_counter() - began - copied
            (count,) = con.execute(
                sql.SQL("SELECT count(*) FROM {}").format(sql.Identifier(TABLE))
            ).fetchone()
        print(
            f"   load: COPY {count:,} rows {copied:.1f} s, ANALYZE {analysed:.1f} s "
            f"({csv.stat().st_size / 2**20:,.0f} MiB CSV); {_load()}"
        )
        return timed_scan(_scan_command(url, "--table", TABLE), out, env, timeout)
    finally:
        server.stop()
        print(f"   cluster stopped, folder {server.folder} removed: {not server.folder.exists()}")


def _parse() -> argparse.Namespace:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--rows", type=int, default=1_000_000)
    parser.add_argument("--cols", type=int, default=50)
    parser.add_argument(
        "--workdir",
        type=Path,
        default=Path("/tmp/bendwise-engine-sources"),
        help="folder for the Parquet and CSV files and scan outputs (kept)",
    )
    parser.add_argument("--spark-master", default="local[2]", help="default local[2]")
    parser.add_argument(
        "--only", choices=("postgres", "spark"), help="one source (the file scan always runs)"
    )
    parser.add_argument(
        "--timeout", type=float, default=3600.0, help="stop a scan after this many seconds"
    )
    parser.add_argument("--results", type=Path, default=results_path("engine_sources"))
    return parser.parse_args()


def main() -> None:
    args = _parse()
    env = {**os.environ, "PYTHONPATH": str(REPO), "SPARK_LOCAL_IP": "127.0.0.1"}
    folder = args.workdir
    with recorded("engine_sources", args.results):
        print(f"{args.rows:,} rows x {args.cols} columns, invented extract; {_load()}")
        parquet = write_parquet(folder, args.rows, args.cols)
        file_out = folder / "scan_file.json"
        seconds = timed_scan(_scan_command(str(parquet)), file_out, env, args.timeout)
        print(f"1. file scan (Parquet, pandas engine): {seconds:.1f} s; {_load()}")
        reference = read_scores(file_out)
        timings = {"file": seconds}

        if args.only in (None, "postgres"):
            print("2. PostgreSQL 15, throwaway cluster")
            pg_out = folder / "scan_postgres.json"
            timings["postgres"] = postgres_run(parquet, pg_out, env, args.timeout)
            print(f"   bendwise scan postgresql://... --table {TABLE}: "
                  f"{timings['postgres']:.1f} s; {_load()}")  # fmt: skip
            print(compare(reference, read_scores(pg_out)))

        if args.only in (None, "spark"):
            print(f"3. Spark local mode, --spark-master {args.spark_master}")
            spark_out = folder / "scan_spark.json"
            command = _scan_command(f"spark:{parquet}", "--spark-master", args.spark_master)
            try:
                timings["spark"] = timed_scan(command, spark_out, env, args.timeout)
            except (Stalled, RuntimeError) as stall:  # keep the figures already printed
                print(f"   bendwise scan spark:...: {stall}; {_load()}")
            else:
                print(f"   bendwise scan spark:...: {timings['spark']:.1f} s; {_load()}")
                print(compare(reference, read_scores(spark_out)))

        print("4. wall time against the file scan: " + ", ".join(
            f"{k} {v / timings['file']:.2f}x" for k, v in timings.items() if k != "file"
        ))  # fmt: skip
        print(f"end: {_load()}")


if __name__ == "__main__":
    main()

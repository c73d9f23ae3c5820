"""How fast is a bendwise scan, and how close to fitting every row? One run, one data set.

    python benchmarks/scan_speed.py --rows 1000000 --cols 50

Generates an invented extract with a fixed seed (benchmarks/synthetic.py), writes it as
Parquet, loads it once, and measures on that same data:

1. the naive baseline: statsmodels linear and 4-knot spline fits of every column on all
   rows (benchmarks/naive.py);
2. bendwise's scan engine (``scan_columns``) on the loaded data: worker processes (the
   default), threads, and one process, each timed ``--repeat`` times;
3. ``bendwise scan`` end to end on the Parquet file, in a child process: wall time and
   peak memory of the process tree;
4. the full candidate table of every column (reduce + all forms, FP2's 36 fits included);
5. a scaling table over N (``--scaling``), and with ``--bins-sweep`` the time and error
   of several bin bounds B against exact fits on every distinct value.

Timing belongs here, never in the test suite. Absolute times depend on the machine and
on whatever else it is running; the ratios and errors are the point. The printout is also
written to benchmarks/results/scan_speed.md (``--results`` to write elsewhere).
"""

from __future__ import annotations

import argparse
import multiprocessing
import os
import platform
import statistics
import sys
import tempfile
import time
from collections.abc import Callable
from pathlib import Path

import numpy as np
import pandas as pd
from scipy import stats

REPO = Path(__file__).resolve().parent.parent
if str(REPO) not in sys.path:  # run as a script from anywhere
    sys.path.insert(0, str(REPO))

from benchmarks.memory import run_measured  # noqa: E402
from benchmarks.naive import naive_scan_of_file  # noqa: E402
from benchmarks.results import recorded, results_path  # noqa: E402
from benchmarks.synthetic import OUTCOME, make_extract  # noqa: E402
from tui.engine.compare import compare_forms  # noqa: E402
from tui.engine.counts import reduce_column  # noqa: E402
from tui.engine.fitting import fit_logistic, lr_test, one_blas_thread  # noqa: E402
from tui.engine.forms.spline import KNOT_PERCENTILES, spline_basis  # noqa: E402
from tui.engine.runner import default_workers, scan_columns  # noqa: E402
from tui.engine.scan import ScanSettings  # noqa: E402

TOP = 10
REL_TOLERANCE, ABS_TOLERANCE = 0.02, 0.5


def _parse() -> argparse.Namespace:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--rows", type=int, default=1_000_000, help="rows N (default 1e6)")
    parser.add_argument("--cols", type=int, default=50, help="numeric columns P (default 50)")
    parser.add_argument("--repeat", type=int, default=3, help="timed runs of the engine")
    parser.add_argument(
        "--scaling",
        default="10000,100000,1000000",
        help="comma-separated N for the scaling table; empty to skip",
    )
    parser.add_argument(
        "--bins-sweep",
        action="store_true",
        help="also time and check bin bounds 250..4000 against exact fits (slow)",
    )
    parser.add_argument("--workdir", help="folder for the Parquet file (default: a temp one)")
    parser.add_argument(
        "--results",
        type=Path,
        default=results_path("scan_speed"),
        help="results file to rewrite (default: benchmarks/results/scan_speed.md)",
    )
    return parser.parse_args()


def _columns(frame: pd.DataFrame) -> list[str]:
    return [c for c in frame.columns if c != OUTCOME]


def _time_naive(path: Path) -> tuple[float, dict[str, float | None]]:
    """The naive loop in a fresh process of its own, on the same Parquet file."""
    with multiprocessing.get_context("spawn").Pool(1) as pool:
        return pool.apply(naive_scan_of_file, (str(path), OUTCOME))


def _values_of(frame: pd.DataFrame) -> Callable[[str], np.ndarray]:
    def values(name: str) -> np.ndarray:
        return frame[name].to_numpy(dtype=float)

    return values


def _time_engine(
    frame: pd.DataFrame, workers: int | None, pool: str, settings: ScanSettings
) -> tuple[float, dict[str, float | None]]:
    y = frame[OUTCOME].to_numpy()
    start = time.perf_counter()
    results = list(
        scan_columns(_columns(frame), _values_of(frame), y, settings, workers=workers, pool=pool)
    )
    return time.perf_counter() - start, {r.column: r.score for r in results}


def _agreement(naive: dict[str, float | None], ours: dict[str, float | None]) -> dict:
    both = [c for c in naive if naive[c] is not None and ours.get(c) is not None]
    a = np.array([naive[c] for c in both])
    b = np.array([ours[c] for c in both])
    absolute = np.abs(b - a)
    relative = absolute / np.maximum(np.abs(a), 1e-12)
    outside = [
        c
        for c, r, d in zip(both, relative, absolute, strict=True)
        if r > REL_TOLERANCE and d > ABS_TOLERANCE
    ]
    top_naive = set(sorted(both, key=lambda c: -naive[c])[:TOP])  # type: ignore[operator]
    top_ours = set(sorted(both, key=lambda c: -ours[c])[:TOP])  # type: ignore[operator]
    return {
        "compared": len(both),
        "unscored_naive": sum(v is None for v in naive.values()),
        "unscored_ours": sum(ours.get(c) is None for c in naive),
        "max_relative": float(relative.max()) if both else float("nan"),
        "max_absolute": float(absolute.max()) if both else float("nan"),
        "outside": outside,
        "spearman": float(stats.spearmanr(a, b).statistic) if len(both) > 2 else float("nan"),
        "top_same": top_naive == top_ours,
        "top_diff": sorted(top_naive ^ top_ours),
    }


def _full_tables(frame: pd.DataFrame) -> list[float]:
    y = frame[OUTCOME].to_numpy()
    seconds = []
    with one_blas_thread():
        for name in _columns(frame):
            x = frame[name].to_numpy(dtype=float)
            start = time.perf_counter()
            compare_forms(reduce_column(x, y))
            seconds.append(time.perf_counter() - start)
    return seconds


def _exact_score(x: np.ndarray, y: np.ndarray) -> float | None:
    """Linear and spline fitted on every distinct value: the row-level fit, exactly."""
    counts = reduce_column(x, y, max_levels=sys.maxsize)
    knots = np.unique(counts.quantile(KNOT_PERCENTILES[4]))
    if knots.size < 3:
        return None
    ones = np.ones(counts.distinct)
    linear = fit_logistic(np.column_stack([ones, counts.x]), counts.events, counts.trials)
    spline = fit_logistic(
        np.column_stack([ones, spline_basis(counts.x, knots)]), counts.events, counts.trials
    )
    return lr_test(linear, spline, knots.size - 2)[0]


def _bins_sweep(frame: pd.DataFrame) -> None:
    print("\nBin bound B: one process, against exact fits on every distinct value")
    y = frame[OUTCOME].to_numpy()
    with one_blas_thread():
        exact = {n: _exact_score(frame[n].to_numpy(dtype=float), y) for n in _columns(frame)}
    print(f"  {'B':>5}  {'s/column':>9}  {'max rel':>8}  {'max abs':>8}  {'spearman':>8}  top-10")
    for bins in (250, 500, 1000, 2000, 4000):
        seconds, ours = _time_engine(frame, 1, "process", ScanSettings(max_levels=bins))
        agree = _agreement(exact, ours)
        print(
            f"  {bins:>5}  {seconds / len(ours):>9.4f}  {agree['max_relative']:>8.2%}  "
            f"{agree['max_absolute']:>8.3f}  {agree['spearman']:>8.4f}  "
            f"{'same' if agree['top_same'] else 'differs'}"
        )


def _scaling(
    sizes: list[int], cols: int, known: dict[int, tuple[float, float]], folder: Path
) -> None:
    print(f"\nScaling, P = {cols} (seconds per column; engine with worker processes)")
    print(f"  {'N':>9}  {'naive':>8}  {'bendwise':>9}  {'ratio':>7}")
    for rows in sizes:
        if rows in known:
            naive_s, ours_s = known[rows]
        else:
            frame, _ = make_extract(rows, cols)
            path = folder / f"scaling_{rows}.parquet"
            frame.to_parquet(path, index=False)
            naive_s, _ = _time_naive(path)
            runs = [_time_engine(frame, None, "process", ScanSettings())[0] for _ in range(3)]
            ours_s = statistics.median(runs)
        print(
            f"  {rows:>9,}  {naive_s / cols:>8.4f}  {ours_s / cols:>9.4f}  "
            f"{naive_s / ours_s:>6.1f}x"
        )


def main() -> int:
    args = _parse()
    with recorded("scan_speed", args.results):
        _run(args)
    return 0


def _run(args: argparse.Namespace) -> None:
    print(
        f"bendwise scan benchmark: N = {args.rows:,} rows, P = {args.cols} columns; "
        f"{os.cpu_count()} cores, Python {platform.python_version()}, "
        f"numpy {np.__version__}, engine workers {default_workers()}"
    )
    print(f"load average at start (1, 5, 15 min): {_load()}")
    if args.workdir:  # a folder that is not there yet is made, not a traceback
        Path(args.workdir).mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory(dir=args.workdir) as folder:
        frame, _ = make_extract(args.rows, args.cols)
        path = Path(folder) / "pump_months.parquet"
        frame.to_parquet(path, index=False)
        del frame
        frame = pd.read_parquet(path)
        print(f"data: {path.name}, {path.stat().st_size / 2**20:.0f} MiB on disk")

        naive_s, naive = _time_naive(path)
        print(f"\n1. naive baseline (statsmodels, all rows; own process): {naive_s:.1f} s")

        print(f"\n2. scan engine on the loaded data ({args.repeat} runs each, seconds)")
        timings: dict[str, list[float]] = {}
        ours: dict[str, float | None] = {}
        for label, workers, pool in (
            ("processes (default)", None, "process"),
            ("threads", None, "thread"),
            ("one process", 1, "process"),
        ):
            runs = []
            for _ in range(args.repeat):
                seconds, scores = _time_engine(frame, workers, pool, ScanSettings())
                runs.append(seconds)
                if pool == "process" and workers is None:
                    ours = scores
            timings[label] = runs
            shown = ", ".join(f"{s:.2f}" for s in runs)
            print(f"   {label:<20} median {statistics.median(runs):.2f}  ({shown})")
        engine_s = statistics.median(timings["processes (default)"])
        print(f"   ratio naive / bendwise (median): {naive_s / engine_s:.1f}x")
        print(
            f"   ratio naive / bendwise (best):   "
            f"{naive_s / min(timings['processes (default)']):.1f}x"
        )

        agree = _agreement(naive, ours)
        print(f"\n   scores compared: {agree['compared']} columns")
        print(f"   largest relative score difference: {agree['max_relative']:.3%}")
        print(f"   largest absolute score difference: {agree['max_absolute']:.4f}")
        print(
            f"   outside 2% relative and 0.5 absolute: {len(agree['outside'])} "
            f"{agree['outside'] or ''}"
        )
        print(f"   Spearman rank correlation: {agree['spearman']:.5f}")
        top = "yes" if agree["top_same"] else f"no, differ: {agree['top_diff']}"
        print(f"   same top-{TOP} set: {top}")

        command = [sys.executable, "-m", "tui", "scan", str(path), "--outcome", OUTCOME]
        command += ["--format", "csv", "--output", str(Path(folder) / "scan.csv")]
        env = dict(os.environ, PYTHONPATH=str(REPO))
        measured = run_measured(command, env=env)
        print(f"\n3. bendwise scan on the Parquet file, end to end (exit {measured.returncode})")
        print(f"   wall time: {measured.seconds:.2f} s")
        print(f"   peak memory, largest single process (RSS): {measured.max_rss_mb:.0f} MiB")
        if measured.peak_pss_mb is not None:
            print(f"   peak memory, whole process tree (PSS): {measured.peak_pss_mb:.0f} MiB")

        tables = _full_tables(frame)
        print(
            f"\n4. full candidate table per column (reduce + every form): "
            f"median {statistics.median(tables):.3f} s, max {max(tables):.3f} s"
        )

        if args.bins_sweep:
            _bins_sweep(frame)
        sizes = [int(s) for s in args.scaling.split(",") if s.strip()]
        if sizes:
            del frame
            _scaling(sizes, args.cols, {args.rows: (naive_s, engine_s)}, Path(folder))
    print(f"\nload average at end (1, 5, 15 min): {_load()}")


def _load() -> str:
    """Other work on the machine slows every timing here; say how much there was."""
    try:
        return ", ".join(f"{v:.2f}" for v in os.getloadavg())
    except OSError:
        return "unknown"


if __name__ == "__main__":
    sys.exit(main())

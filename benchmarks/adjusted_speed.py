"""How long does an adjusted scan take? 100,000 rows, 50 columns, 5 covariates by default.

    python benchmarks/adjusted_speed.py --rows 100000 --cols 50 --covariates 5

Adjusted checks fit every row (the covariates break the reduction to counts), so this
measures the exact row-level path: the unadjusted scan for comparison, then the scan with
the first five columns of the invented extract as linear covariates, on worker processes
and in one process, and a spot check that one column's adjusted score equals a direct
statsmodels fit of the same design.

End to end, on a Parquet file of the same data: ``bendwise scan --adjust`` (a fresh
process, reading the file, both passes) against a hand loop that reads the file and makes
the same two statsmodels fits per column (linear and 4-knot restricted cubic spline,
covariates in both), timed one after the other in the same run, with the load average of
the machine beside them; and the largest relative difference between the printed scores
and the loop's likelihood-ratio statistics, and the CPU time and peak resident memory
of the scan's processes. Timing belongs here, never in the test suite.
The printout is also written to benchmarks/results/adjusted_speed.md (``--results``
elsewhere).
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import statsmodels.api as sm

REPO = Path(__file__).resolve().parent.parent
if str(REPO) not in sys.path:  # run as a script from anywhere
    sys.path.insert(0, str(REPO))

from benchmarks.results import recorded, results_path  # noqa: E402
from benchmarks.synthetic import OUTCOME, make_extract  # noqa: E402
from tui.engine.adjust import Adjustment  # noqa: E402
from tui.engine.covariates import build_covariates  # noqa: E402
from tui.engine.forms.spline import KNOT_PERCENTILES, spline_basis  # noqa: E402
from tui.engine.runner import default_workers, scan_columns  # noqa: E402
from tui.engine.scan import ScanSettings, rank  # noqa: E402


def _timed(columns, values_of, y, adjust, workers):
    start = time.perf_counter()
    results = rank(scan_columns(columns, values_of, y, ScanSettings(), workers=workers,
                                adjust=adjust))  # fmt: skip
    return time.perf_counter() - start, results


def _direct_score(x, y, covariates) -> float:
    ok = np.isfinite(x) & np.all(np.isfinite(covariates), axis=1)
    x, y, z = x[ok], y[ok], covariates[ok]
    ones = np.ones((x.size, 1))
    family = sm.families.Binomial()
    linear = sm.GLM(y, np.hstack([ones, z, x[:, None]]), family=family).fit()
    basis = spline_basis(x, np.quantile(x, KNOT_PERCENTILES[4]))
    spline = sm.GLM(y, np.hstack([ones, z, basis]), family=family).fit()
    return float(linear.deviance - spline.deviance)


def _hand_loop(path: Path, columns: list[str], covariates: list[str]) -> dict[str, float]:
    """What an analyst would write: read the file, two statsmodels fits per column."""
    import pandas as pd

    frame = pd.read_parquet(path)
    y = frame[OUTCOME].to_numpy(dtype=float)
    z = frame[covariates].to_numpy(dtype=float)
    return {c: _direct_score(frame[c].to_numpy(dtype=float), y, z) for c in columns}


def _load() -> str:
    one, five, fifteen = os.getloadavg()
    return f"load average {one:.2f}, {five:.2f}, {fifteen:.2f}"


_PEAK = (
    "import resource, subprocess, sys; done = subprocess.run(sys.argv[1:]); "
    "print(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss, file=sys.stderr); "
    "sys.exit(done.returncode)"
)
"""Runs a command and prints the largest resident set (KiB) of it and its workers: a
process of its own, so that the processes this benchmark started before do not count."""


def _timed_scan(checkout: Path, command: list[str], label: str) -> tuple[float, dict]:
    """``bendwise scan`` of one checkout in a fresh process: wall time, printed scores."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    done = subprocess.run([sys.executable, "-c", _PEAK, *command], capture_output=True,
                          text=True, check=True, cwd=checkout,
                          env={**os.environ, "PYTHONPATH": str(checkout)})  # fmt: skip
    wall = time.perf_counter() - start
    print(f"{label + ', end to end:':49s}{wall:7.2f} s; {_load()}")
    # CPU time of the scan and its workers: less shaken than wall time on a shared machine.
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    user, system = after.ru_utime - before.ru_utime, after.ru_stime - before.ru_stime
    peak = int(done.stderr.split()[-1]) / 1024
    print(f"  CPU time of the scan's processes: user {user:.2f} s, system {system:.2f} s; "
          f"peak resident memory {peak:.0f} MiB")  # fmt: skip
    return wall, {r["column"]: r for r in json.loads(done.stdout)}


def _end_to_end(frame, columns: list[str], covariates: list[str], earlier: Path | None) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "extract.parquet"
        frame.to_parquet(path)
        print(f"end to end on {path.name} ({path.stat().st_size / 2**20:.1f} MiB); {_load()}")
        start = time.perf_counter()
        expected = _hand_loop(path, columns, covariates)
        loop = time.perf_counter() - start
        print(f"hand loop (read + 2 statsmodels fits per column): {loop:7.2f} s; {_load()}")
        joined = ",".join(covariates)
        command = [sys.executable, "-m", "tui", "scan", str(path), "--outcome", OUTCOME,
                   "--adjust", joined, "--exclude", joined, "--format", "json"]  # fmt: skip
        if earlier is not None:
            old_wall, old = _timed_scan(earlier, command, f"the same scan from {earlier}")
            print(f"ratio: {loop / old_wall:.1f}x faster than the hand loop")
        scan, rows = _timed_scan(REPO, command, "bendwise scan --adjust")
        print(f"ratio: {loop / scan:.1f}x faster than the hand loop")
        worst = max(abs(rows[c]["score"] - v) / max(abs(v), 1e-12) for c, v in expected.items())
        print(f"largest relative score difference against the loop ({len(columns)} columns): "
              f"{worst:.1e}")  # fmt: skip
        if earlier is not None:
            same = sum(rows[c]["best_form"] == old[c]["best_form"] for c in columns)
            print(f"best form the same as the earlier checkout's in {same} of {len(columns)} "
                  f"columns; {old_wall / scan:.2f}x its wall time")  # fmt: skip


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=100_000)
    parser.add_argument("--cols", type=int, default=50)
    parser.add_argument("--covariates", type=int, default=5)
    parser.add_argument(
        "--results",
        type=Path,
        default=results_path("adjusted_speed"),
        help="results file to rewrite (default: benchmarks/results/adjusted_speed.md)",
    )
    parser.add_argument(
        "--before",
        type=Path,
        metavar="CHECKOUT",
        help="also time the scan from this checkout (e.g. a worktree of main), right before",
    )
    args = parser.parse_args()
    with recorded("adjusted_speed", args.results):
        _run(args)
    return 0


def _run(args: argparse.Namespace) -> None:

    frame, _planted = make_extract(args.rows, args.cols + args.covariates)
    names = [c for c in frame.columns if c != OUTCOME]
    covariate_names, columns = names[: args.covariates], names[args.covariates :]
    y = frame[OUTCOME].to_numpy()

    def values_of(column: str) -> np.ndarray:
        return frame[column].to_numpy(dtype=float)

    numeric = {c: values_of(c) for c in covariate_names}
    adjust = Adjustment(build_covariates(covariate_names, numeric, {}))
    workers = default_workers()
    print(f"adjusted scan benchmark: N = {args.rows:,} rows, P = {len(columns)} columns, "
          f"{args.covariates} linear covariates; {workers} worker processes")  # fmt: skip
    plain, _ = _timed(columns, values_of, y, None, workers)
    print(f"unadjusted scan (reduced counts):        {plain:7.2f} s")
    parallel, results = _timed(columns, values_of, y, adjust, workers)
    print(f"adjusted scan, {workers} worker processes:    {parallel:7.2f} s "
          f"({parallel / len(columns):.3f} s per column)")  # fmt: skip
    single, _ = _timed(columns, values_of, y, adjust, 1)
    print(f"adjusted scan, one process:              {single:7.2f} s")
    top = results[0]
    covariates = np.column_stack([numeric[c] for c in covariate_names])
    direct = _direct_score(values_of(top.column), y.astype(float), covariates)
    print(f"spot check, {top.column}: bendwise {top.score:.6f}, statsmodels {direct:.6f}, "
          f"difference {abs(top.score - direct):.2e}")  # fmt: skip
    _end_to_end(frame, columns, covariate_names, args.before)


if __name__ == "__main__":
    sys.exit(main())

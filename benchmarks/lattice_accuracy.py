"""Long columns: the lattice reduction against the sorted one, for time and for error.

    python benchmarks/lattice_accuracy.py               # 1,000,000 rows (about a minute)
    python benchmarks/lattice_accuracy.py --rows 300000

For invented columns of several kinds (skewed, bell-shaped, rounded to two decimals, a heap
of ties, whole numbers over a wide range; and three the lattice declines, so they are sorted:
a heap of zeros, mixed signs, very long tails) with a planted
curved effect, this prints per column: which path reduced it (lattice, or sorted where the
lattice declines), the CPU time of each path (best of three, one process), the largest
quantile error of the 2,001-point grid against numpy.quantile (in cell widths), the
distinct-count error against numpy.unique, and the triage score (spline against linear,
LR chi-square) on the lattice, on the sorted bins and on every distinct value (exact).
Writes its printout to benchmarks/results/lattice_accuracy.md.
"""

from __future__ import annotations

import argparse
import os
import sys
import time
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parent.parent
if str(REPO) not in sys.path:  # run as a script from anywhere
    sys.path.insert(0, str(REPO))

from benchmarks.results import recorded, results_path  # noqa: E402
from tui.engine import counts as C  # noqa: E402
from tui.engine import lattice as L  # noqa: E402
from tui.engine.fitting import one_blas_thread  # noqa: E402
from tui.engine.scan import ScanSettings, scan_counts  # noqa: E402


def _columns(rows: int) -> dict[str, np.ndarray]:
    rng = np.random.default_rng(4242)
    return {
        "skewed (lognormal)": rng.lognormal(1.0, 0.8, rows),
        "bell (normal)": rng.normal(80.0, 10.0, rows),
        "two decimals": np.round(rng.normal(100.0, 20.0, rows), 2),
        "30% ones + gamma": np.where(rng.random(rows) < 0.3, 1.0, rng.gamma(2.0, 3.0, rows)),
        "30% zeros + gamma": np.where(rng.random(rows) < 0.3, 0.0, rng.gamma(2.0, 3.0, rows)),
        "whole 1..500,000": rng.integers(1, 500_001, rows).astype(float),
        "mixed signs": rng.normal(0.0, 1.0, rows),
        "long tail (Pareto 1)": rng.pareto(1.0, rows),
    }


def _events(x: np.ndarray) -> np.ndarray:
    rng = np.random.default_rng(17)
    z = np.log1p(np.abs(x)) * np.sign(x)
    z = (z - np.median(z)) / z.std()
    return rng.random(x.size) < 1.0 / (1.0 + np.exp(-(0.05 * z - 0.03 * z * z)))


def _cpu(fn) -> tuple[float, object]:
    best, out = np.inf, None
    for _ in range(3):
        start = time.process_time()
        out = fn()
        best = min(best, time.process_time() - start)
    return best, out


def _score(name: str, counts: C.ReducedCounts, rows: int) -> float:
    scan = scan_counts(name, counts, rows, 0, False, ScanSettings(), forms=False)[0]
    return float(scan.score) if scan.score is not None else float("nan")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--rows", type=int, default=1_000_000)
    parser.add_argument("--results", type=Path, default=results_path("lattice_accuracy"))
    args = parser.parse_args()
    with recorded("lattice_accuracy", args.results), one_blas_thread():
        print(f"lattice against sorted reduction; {args.rows:,} rows; {os.cpu_count()} cores")
        print(f"load average at start: {', '.join(f'{v:.2f}' for v in os.getloadavg())}")
        print(f"cells {L.CELLS:,}; lattice from {L.LATTICE_ROWS:,} rows\n")
        head = f"{'column':22s} {'path':8s} {'lattice ms':>10s} {'sorted ms':>9s}"
        head += f" {'q err/cell':>10s} {'distinct err':>12s} {'score: lattice':>14s}"
        print(head + f" {'sorted':>9s} {'exact':>9s}")
        for name, x in _columns(args.rows).items():
            y = _events(x)
            fast, got = _cpu(lambda x=x, y=y: C.reduce_column(x, y))
            saved = C.LATTICE_ROWS
            C.LATTICE_ROWS = 1 << 62  # the sorted path, as before the lattice
            try:
                slow, sorted_ = _cpu(lambda x=x, y=y: C.reduce_column(x, y))
            finally:
                C.LATTICE_ROWS = saved
            same = not got.values_estimated and np.array_equal(got.x, sorted_.x)
            path = "sorted" if same else "lattice"
            probs = np.linspace(0.0, 1.0, 2001)
            width = (x.max() - x.min()) / L.CELLS
            q_err = np.abs(got.quantile(probs) - np.quantile(x, probs)).max() / width
            distinct = np.unique(x).size
            d_err = got.distinct_values / distinct - 1.0
            exact = C.reduce_column(x, y, max_levels=args.rows)
            scores = [_score(name, c, args.rows) for c in (got, sorted_, exact)]
            print(
                f"{name:22s} {path:8s} {fast * 1e3:10.1f} {slow * 1e3:9.1f} {q_err:10.3f}"
                f" {d_err:+12.4%} {scores[0]:14.3f} {scores[1]:9.3f} {scores[2]:9.3f}"
            )
        print(f"\nload average at end: {', '.join(f'{v:.2f}' for v in os.getloadavg())}")


if __name__ == "__main__":
    main()

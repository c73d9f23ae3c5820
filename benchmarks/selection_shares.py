"""How long do bootstrap selection shares take? One column, 1,000,000 rows, B = 200.

    python benchmarks/selection_shares.py --rows 1000000 --resamples 200

The column is invented (fixed seed): a U-shaped effect on the log-odds. It is reduced to
counts (binned, as the scan reduces it), the candidate table is fitted once, and then the
shares are computed: wall time and process CPU time of that step, repeated, plus the shares
themselves. The target is 2 s of wall time on this machine; wall time on a busy machine
(see the load average printed) exceeds the CPU time. Written to
benchmarks/results/selection_shares.md (``--results`` elsewhere).
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
from tui.engine.column_fits import CandidateSet, fit_column  # noqa: E402
from tui.engine.counts import reduce_column  # noqa: E402
from tui.engine.stability import selection_shares  # noqa: E402


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=1_000_000)
    parser.add_argument("--resamples", type=int, default=200)
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--results", type=Path, default=results_path("selection_shares"))
    args = parser.parse_args()
    with recorded("selection_shares", args.results):
        rng = np.random.default_rng(20260101)
        x = np.round(rng.normal(50, 10, args.rows), 2)
        p = 1 / (1 + np.exp(-(-2.0 + 0.002 * (x - 50) ** 2)))
        y = (rng.random(args.rows) < p).astype(float)
        print(f"load average at start: {os.getloadavg()[0]:.2f}")
        start = time.perf_counter()
        counts = reduce_column(x, y)
        wanted = CandidateSet(4, 4)
        table = fit_column(counts, wanted, smooth=False).table
        print(
            f"rows {args.rows:,}, cells {counts.distinct} ({'exact' if counts.exact else 'binned'})"
        )
        print(f"reduce and fit the table once: {time.perf_counter() - start:.2f} s")
        for i in range(args.repeats):
            wall, cpu = time.perf_counter(), time.process_time()
            shares = selection_shares(counts, table, wanted.candidates(), args.resamples, seed=i)
            wall, cpu = time.perf_counter() - wall, time.process_time() - cpu
            print(f"B = {args.resamples}, seed {i}: {wall:.2f} s wall, {cpu:.2f} s CPU")
        labels = {r.key: r.label for r in table.rows}
        print("shares:", shares.leaders(labels, top=3))
        print(f"load average at end: {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()

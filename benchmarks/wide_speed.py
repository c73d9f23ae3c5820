"""Wide data: how fast is a two-pass scan of many columns, and how close to exact fits?

    python benchmarks/wide_speed.py                       # every shape below (~15 minutes)
    python benchmarks/wide_speed.py --shapes 20000x200    # one shape

For each shape (rows x columns) of the invented extract (benchmarks/synthetic.py: fixed
seed; continuous, skewed, whole-number and 5%-missing columns, a few planted shapes),
written as Parquet, this prints:

1. the hand loop: two statsmodels GLM fits per column (linear and a 4-knot restricted cubic
   spline), in a process of its own; with ``--hand-subset K`` only K columns are timed and
   the time is scaled to every column (said so in the printout);
2. ``bendwise scan`` end to end (both passes): wall time, and in a second run the peak
   memory of the process tree (the memory sampler's reads of /proc slow the processes it
   measures, so the time comes from a run without it);
3. the time to the end of the first pass (scores, q-values, flags, shape hints): a child
   process doing what the command does (``first_pass_child.py``, which imports no more than
   the command), timed from its start to its last first-pass result;
4. ratios against the hand loop, and the agreement of bendwise's scores with the hand loop's
   exact ones (largest relative and absolute difference, Spearman, top-10 set);
5. best-form agreement: on ``--forms-subset`` columns, the full candidate table fitted
   exactly on every distinct value against bendwise's; among columns where the exact best
   beats its runner-up by more than 2 AIC, the share whose best form is the same kind.

Also the load average at the start and end of each shape: the machine may be shared.
Writes its printout to benchmarks/results/wide_speed.md (``--results`` to write elsewhere).
"""

from __future__ import annotations

import argparse
import csv
import multiprocessing
import os
import subprocess
import sys
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

REPO = Path(__file__).resolve().parent.parent
if str(REPO) not in sys.path:  # run as a script from anywhere
    sys.path.insert(0, str(REPO))

from benchmarks.memory import run_measured  # noqa: E402
from benchmarks.results import recorded, results_path  # noqa: E402
from benchmarks.synthetic import OUTCOME, make_extract  # noqa: E402

TOP = 10
REL_TOLERANCE, ABS_TOLERANCE = 0.02, 0.5
CLEAR_AIC = 2.0
WIDEST_PLAIN = 500
SHAPES = "20000x200,20000x500,20000x2000,1000000x50"


def _parse() -> argparse.Namespace:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--shapes", default=SHAPES, help=f"rows x columns list ({SHAPES})")
    parser.add_argument(
        "--hand-subset",
        type=int,
        default=200,
        help="time the hand loop on at most this many columns and scale (default 200)",
    )
    parser.add_argument(
        "--forms-subset",
        type=int,
        default=100,
        help="columns whose forms are fitted exactly for the best-form check (default 100; "
        "skipped above 100,000 rows unless --forms-large)",
    )
    parser.add_argument(
        "--forms-large",
        action="store_true",
        help="make the best-form check above 100,000 rows too (exact tables on every "
        "distinct value: 15 to 30 s a continuous column at 1,000,000 rows, 1.7 GB)",
    )
    parser.add_argument("--workdir", help="folder for the Parquet files (default: a temp one)")
    parser.add_argument("--results", type=Path, default=results_path("wide_speed"))
    return parser.parse_args()


def _load() -> str:
    return ", ".join(f"{v:.2f}" for v in os.getloadavg())


def _hand_loop(path: str, columns: list[str]) -> tuple[float, dict[str, float | None]]:
    """The hand loop over ``columns`` (run in a fresh process)."""
    frame = pd.read_parquet(path, columns=[*columns, OUTCOME])
    y = frame[OUTCOME].to_numpy(dtype=float)
    from benchmarks.naive import naive_score  # statsmodels: not in the first-pass child

    scores: dict[str, float | None] = {}
    start = time.perf_counter()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # statsmodels warns on near-separated columns
        for name in columns:
            scores[name] = naive_score(frame[name].to_numpy(dtype=float), y)
    return time.perf_counter() - start, scores


def _exact_forms(path: str, columns: list[str]) -> dict[str, tuple[str, float]]:
    """Best kind and its AIC margin over the runner-up, every fit on every distinct value."""
    from tui.engine.compare import compare_forms
    from tui.engine.counts import reduce_column
    from tui.engine.fitting import one_blas_thread

    frame = pd.read_parquet(path, columns=[*columns, OUTCOME])
    y = frame[OUTCOME].to_numpy()
    out: dict[str, tuple[str, float]] = {}
    with one_blas_thread():
        for name in columns:
            counts = reduce_column(frame[name].to_numpy(dtype=float), y, exact_below=10**12)
            if counts.distinct_values <= 2:
                continue
            usable = sorted((r.aic, r.kind) for r in compare_forms(counts).rows if r.status == "ok")
            if len(usable) >= 2:
                out[name] = (usable[0][1], usable[1][0] - usable[0][0])
    return out


def _in_process(function, *args):  # noqa: ANN001, ANN202 - a thin helper
    with multiprocessing.get_context("spawn").Pool(1) as pool:
        return pool.apply(function, args)


def _kind_of(best_form: str) -> str:
    """Kind key of a best-form label (``FP2, powers 1, 2`` -> ``fp2``)."""
    return best_form.split(",")[0].split(" ")[0].lower()


def _shape(rows: int, cols: int, folder: Path, args: argparse.Namespace) -> None:
    print(f"\n## {rows:,} rows x {cols:,} columns")
    print(f"load average at start (1, 5, 15 min): {_load()}")
    # Beyond 500 columns the planted effects are centred and scaled down (strength
    # sqrt(500 / columns)): summed as they are, they would make every row an event.
    strength = None if cols <= WIDEST_PLAIN else (WIDEST_PLAIN / cols) ** 0.5
    if strength is not None:
        print(f"planted effects centred and scaled by {strength:.3f}")
    frame, _ = make_extract(rows, cols, strength=strength)
    path = folder / f"wide_{rows}x{cols}.parquet"
    frame.to_parquet(path)
    names = [c for c in frame.columns if c != OUTCOME]
    del frame
    os.sync()  # the file's pages go to disk now, not during the timed runs

    subset = names[: args.hand_subset] if args.hand_subset else names
    hand, exact = _in_process(_hand_loop, str(path), subset)
    scale = len(names) / len(subset)
    hand_all = hand * scale
    note = "" if scale == 1 else f" (timed on {len(subset)} columns, scaled x{scale:g})"
    print(f"1. hand loop (statsmodels, 2 fits a column): {hand_all:.1f} s{note}")

    out = folder / f"scan_{rows}x{cols}.csv"  # one per shape: bendwise never replaces a file
    command = [sys.executable, "-m", "tui", "scan", str(path), "--outcome", OUTCOME]
    command += ["--format", "csv", "--output", str(out)]
    env = dict(os.environ, PYTHONPATH=str(REPO))
    # Timed without the memory sampler (it slows the processes it reads), then run again
    # with it for the peak memory.
    measured = run_measured(command, env=env, sample=False)
    print(f"2. bendwise scan end to end, both passes (exit {measured.returncode}):")
    print(f"   wall {measured.seconds:.2f} s; load average now {_load()}")
    again = [*command[:-1], str(out.with_suffix(".memory.csv"))]
    sampled = run_measured(again, env=env)
    pss = f"{sampled.peak_pss_mb:.0f}" if sampled.peak_pss_mb is not None else "n/a"
    print(
        f"   peak memory (a second run, sampled every 20 ms; wall {sampled.seconds:.2f} s): "
        f"largest process {sampled.max_rss_mb:.0f} MiB, tree {pss} MiB"
    )

    report = folder / "first_pass_end"
    started = time.time()
    child = [sys.executable, str(Path(__file__).with_name("first_pass_child.py"))]
    child += [str(path), OUTCOME, str(report)]
    subprocess.run(child, env=env, check=True)
    first = float(report.read_text()) - started
    print(f"3. time to the end of the first pass: {first:.2f} s")
    print(
        f"4. ratio hand loop / bendwise: end to end {hand_all / measured.seconds:.1f}x, "
        f"first pass {hand_all / first:.1f}x"
    )

    with out.open(newline="") as handle:
        got = {r["column"]: r for r in csv.DictReader(handle)}
    both = [c for c in subset if exact.get(c) is not None and got[c]["score"] not in ("", None)]
    e = np.array([exact[c] for c in both])
    b = np.array([float(got[c]["score"]) for c in both])
    diff = np.abs(b - e)
    rel = diff / np.maximum(np.abs(e), 1e-12)
    outside = [
        c
        for c, d, r in zip(both, diff, rel, strict=True)
        if d > ABS_TOLERANCE and r > REL_TOLERANCE
    ]
    top_e = set(np.array(both)[np.argsort(-e)[:TOP]])
    top_b = set(np.array(both)[np.argsort(-b)[:TOP]])
    print(f"   scores against exact fits ({len(both)} columns):")
    print(f"   largest relative difference {rel.max():.3%}, largest absolute {diff.max():.4f}")
    print(f"   outside 2% and 0.5: {len(outside)} {outside or ''}")
    from scipy import stats  # not in the first-pass child, which bendwise scan mirrors

    print(f"   Spearman {stats.spearmanr(e, b)[0]:.5f}; same top-{TOP}: {top_e == top_b}")

    if not args.forms_subset or (rows > 100_000 and not args.forms_large):
        print("5. best form against exact tables: not measured at this size")
    else:
        picked = names[: args.forms_subset]
        forms = _in_process(_exact_forms, str(path), picked)
        clear = [c for c, (_, margin) in forms.items() if margin > CLEAR_AIC]
        same = [c for c in clear if _kind_of(got[c]["best_form"] or "") == forms[c][0]]
        share = len(same) / len(clear) if clear else float("nan")
        print(
            f"5. best form equal to the exact one: {len(same)}/{len(clear)} = {share:.1%} "
            f"of clearly decided columns (margin > {CLEAR_AIC:g} AIC; first {len(picked)} columns)"
        )
    print(f"load average at end: {_load()}")


def main() -> None:
    args = _parse()
    with recorded("wide_speed", args.results):
        print(f"wide-data benchmark; {os.cpu_count()} cores; shapes {args.shapes}")
        if args.workdir:  # a folder that is not there yet is made, not a traceback
            Path(args.workdir).mkdir(parents=True, exist_ok=True)
        with tempfile.TemporaryDirectory(dir=args.workdir) as folder:
            for shape in args.shapes.split(","):
                rows, cols = (int(v) for v in shape.lower().split("x"))
                _shape(rows, cols, Path(folder), args)


if __name__ == "__main__":
    main()

"""How close are binned fits to exact ones on hard columns? Every candidate, 250,000 rows.

    python benchmarks/binned_accuracy.py [--rows 250000]

For each invented hard column (fixed seeds) the full candidate table is fitted twice: on
the binned counts a scan uses (``reduce_column`` with its defaults) and on every distinct
value (exact, the row-level fit). Printed per candidate: the likelihood-ratio (deviance
drop) against linear on both paths and the relative difference, the learned numbers when
they differ, and whether the logged recoding gives finite values on every training row.
The printout is also written to benchmarks/results/binned_accuracy.md.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable
from pathlib import Path

import numpy as np
from scipy.special import expit

REPO = Path(__file__).resolve().parent.parent
if str(REPO) not in sys.path:
    sys.path.insert(0, str(REPO))

from benchmarks.results import recorded  # noqa: E402
from tui.engine.compare import compare_forms  # noqa: E402
from tui.engine.counts import reduce_column  # noqa: E402

Maker = Callable[[int], tuple[np.ndarray, np.ndarray]]


def lognormal_negatives(n: int) -> tuple[np.ndarray, np.ndarray]:
    """lognormal(1, 1) with 40 values in (-2, 0); logit -1 + 0.4 ln(x + 2.5)."""
    rng = np.random.default_rng(11)
    x = rng.lognormal(1.0, 1.0, n)
    x[rng.choice(n, 40, replace=False)] = rng.uniform(-2, 0, 40)
    return x, (rng.random(n) < expit(-1 + 0.4 * np.log(x + 2.5))).astype(float)


def cauchy_like(n: int) -> tuple[np.ndarray, np.ndarray]:
    """Standard Cauchy x; logit -1 + 1.5 tanh x."""
    rng = np.random.default_rng(12)
    x = rng.standard_cauchy(n)
    return x, (rng.random(n) < expit(-1 + 1.5 * np.tanh(x))).astype(float)


def long_tail(n: int) -> tuple[np.ndarray, np.ndarray]:
    """Uniform (0, 1) for 98% of rows, 10^U(0, 6) for 2%; logit -1 + 0.5 log1p x."""
    rng = np.random.default_rng(13)
    x = rng.uniform(0, 1, n)
    tail = rng.random(n) < 0.02
    x[tail] = 10 ** rng.uniform(0, 6, int(tail.sum()))
    return x, (rng.random(n) < expit(-1 + 0.5 * np.log1p(x))).astype(float)


SETS: dict[str, Maker] = {
    "lognormal with negatives": lognormal_negatives,
    "Cauchy-like": cauchy_like,
    "long upper tail": long_tail,
}


def _same_numbers(a: object, b: object) -> bool:
    """Learned numbers equal to 6 significant digits (knots come from a quantile grid)."""
    if isinstance(a, dict) and isinstance(b, dict):
        return a.keys() == b.keys() and all(_same_numbers(a[k], b[k]) for k in a)
    return bool(np.allclose(np.asarray(a, float), np.asarray(b, float), rtol=1e-6, atol=0))


def measure(name: str, make: Maker, rows: int) -> list[tuple[str, float, float]]:
    x, y = make(rows)
    binned = reduce_column(x, y)
    exact = reduce_column(x, y, max_levels=10 * rows)
    assert not binned.exact and exact.exact
    tables = [compare_forms(c) for c in (binned, exact)]
    print(f"\n### {name} ({rows:,} rows, {binned.distinct} bins)\n")
    print(f"{'form':<12} {'LR binned':>12} {'LR exact':>12} {'rel. diff':>10}  notes")
    out = []
    for b, e in zip(*(t.rows for t in tables), strict=True):
        if b.key == "linear" or b.status != "ok" or e.status != "ok":
            continue
        lr_b = tables[0].linear.deviance - b.deviance
        lr_e = tables[1].linear.deviance - e.deviance
        rel = abs(lr_b - lr_e) / max(abs(lr_e), 1.0)
        notes = []
        if b.recoding is not None and e.recoding is not None:
            if not _same_numbers(b.recoding.params, e.recoding.params):
                notes.append(f"learned {b.recoding.describe()} vs {e.recoding.describe()}")
            bad = int((~np.isfinite(b.recoding.apply(x))).any(axis=1).sum())
            if bad:
                notes.append(f"{bad} training rows non-finite")
        print(f"{b.key:<12} {lr_b:>12.2f} {lr_e:>12.2f} {rel:>10.2%}  {'; '.join(notes)}")
        out.append((b.key, lr_b, lr_e))
    return out


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=250_000)
    parser.add_argument("--results", type=Path, default=None)
    args = parser.parse_args()
    with recorded("binned_accuracy", args.results):
        print("LR = linear deviance minus the form's deviance; rel. diff against exact.")
        for name, make in SETS.items():
            measure(name, make, args.rows)


if __name__ == "__main__":
    main()

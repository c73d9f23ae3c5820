"""An invented extract for timing scans: N rows, P numeric predictors, a binary outcome.

The scenario is made up: a fleet of pumps, one row per pump-month, the outcome a seal
failure within the month. Column kinds cycle through continuous, skewed, whole-number
counts with few distinct values, and continuous or skewed with 5% of values missing.
Every fourth column carries a planted non-linear shape (u-shape, threshold, log curve,
hinge, plateau), a few more a straight-line effect, the rest none. The seed is fixed.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

OUTCOME = "seal_failure"
SEED = 20260905
KINDS = ("continuous", "skewed", "count", "continuous_missing", "skewed_missing")
SHAPES = ("u-shape", "threshold", "log", "hinge", "plateau")
MISSING_SHARE = 0.05


@dataclass(frozen=True)
class Planted:
    """What one column was given: its kind and its true effect on the log-odds."""

    name: str
    kind: str
    effect: str


def _values(kind: str, rows: int, rng: np.random.Generator) -> np.ndarray:
    if kind.startswith("continuous"):
        x = rng.normal(50.0, 10.0, rows)
    elif kind.startswith("skewed"):
        x = rng.lognormal(1.0, 0.8, rows)
    else:
        x = rng.poisson(rng.uniform(2.0, 6.0), rows).astype(float)
    if kind.endswith("missing"):
        x[rng.random(rows) < MISSING_SHARE] = np.nan
    return x


def _standard(x: np.ndarray) -> np.ndarray:
    """Centre and scale on the present values; missing values contribute nothing."""
    z = (x - np.nanmean(x)) / np.nanstd(x)
    return np.nan_to_num(z, nan=0.0)


def _effect(effect: str, x: np.ndarray) -> np.ndarray:
    z = _standard(x)
    if effect == "u-shape":
        return 0.35 * (z**2 - 1.0)
    if effect == "threshold":
        return 0.6 * (z > 0.8)
    if effect == "log":
        u = z - z.min() + 0.05
        return 0.4 * np.log(u / u.mean())
    if effect == "hinge":
        return 0.5 * np.maximum(z - 0.5, 0.0)
    if effect == "plateau":
        return -0.5 * np.minimum(z, 0.3)
    if effect == "linear":
        return 0.25 * z
    return np.zeros_like(z)


def plan(cols: int) -> list[Planted]:
    """Kind and effect of each column (the same for every N)."""
    out = []
    for j in range(cols):
        kind = KINDS[j % len(KINDS)]
        if j % 4 == 0:
            effect = SHAPES[(j // 4) % len(SHAPES)]
        elif j % 4 == 1 and j % 3 == 0:
            effect = "linear"
        else:
            effect = "none"
        out.append(Planted(f"p{j:03d}_{kind.split('_')[0]}", kind, effect))
    return out


def make_extract(
    rows: int, cols: int, seed: int = SEED, strength: float | None = None
) -> tuple[pd.DataFrame, list[Planted]]:
    """The extract (predictors, then the 0/1 outcome) and the planted truth.

    With ``strength``, each planted effect is centred and multiplied by it, so that
    thousands of columns do not add up to log-odds where every row is an event.
    """
    rng = np.random.default_rng(seed)
    planted = plan(cols)
    data: dict[str, np.ndarray] = {}
    log_odds = np.full(rows, -1.2)
    for column in planted:
        x = _values(column.kind, rows, rng)
        effect = _effect(column.effect, x)
        if strength is not None:
            effect = strength * (effect - effect.mean())
        log_odds += effect
        data[column.name] = x
    data[OUTCOME] = (rng.random(rows) < 1.0 / (1.0 + np.exp(-log_odds))).astype(np.int8)
    return pd.DataFrame(data), planted

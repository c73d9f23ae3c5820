"""The shift that makes x positive before a log or power (Royston & Sauerbrei 2008)."""

from __future__ import annotations

import numpy as np

from tui.engine.counts import ReducedCounts


def learn_shift(counts: ReducedCounts) -> float:
    """0 when min(x) > 0, else -min(x) plus the smallest gap between distinct values."""
    xs = np.unique(counts.x)
    if xs.size == 0 or xs[0] > 0:
        return 0.0
    gaps = np.diff(xs)
    gaps = gaps[gaps > 0]
    delta = float(gaps.min()) if gaps.size else 1.0
    return float(-xs[0] + delta)

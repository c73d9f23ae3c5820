"""A LOWESS smoother of the outcome on x, shown on the log-odds scale beside the groups.

statsmodels' ``lowess`` works on rows and has no weights, so the counts are expanded back
to rows (at most ``MAX_ROWS``; larger columns are thinned in proportion, deterministically).
No robustness iterations: with a 0/1 outcome every event would look like an outlier.
Fitted proportions are clipped to [CLIP, 1 - CLIP] before taking logits, so that a stretch
of all-event or no-event rows does not run off to infinity.
"""

from __future__ import annotations

import numpy as np

from tui.engine.counts import ReducedCounts

FRACTION = 2.0 / 3.0
"""Share of the rows in each local fit (statsmodels' default)."""
CLIP = 0.01
MAX_ROWS = 20_000
MAX_POINTS = 200


def smoothed_log_odds(
    counts: ReducedCounts, fraction: float = FRACTION
) -> tuple[np.ndarray, np.ndarray]:
    """x positions and the smoother's log-odds there (empty when it cannot be drawn)."""
    if counts.distinct_values < 3 or counts.rows <= 0:
        return np.zeros(0), np.zeros(0)
    scale = min(1.0, MAX_ROWS / counts.rows)
    events = np.rint(counts.events * scale).astype(int)
    nonevents = np.rint((counts.trials - counts.events) * scale).astype(int)
    x = np.r_[np.repeat(counts.x, events), np.repeat(counts.x, nonevents)]
    y = np.r_[np.ones(events.sum()), np.zeros(nonevents.sum())]
    if x.size < 10:
        return np.zeros(0), np.zeros(0)
    span = float(x.max() - x.min())
    # Imported here: statsmodels (and the scipy under it) would slow every command's start.
    from statsmodels.nonparametric.smoothers_lowess import lowess

    fitted = lowess(y, x, frac=fraction, it=0, delta=0.01 * span, return_sorted=True)
    xs, ps = fitted[:, 0], np.clip(fitted[:, 1], CLIP, 1 - CLIP)
    xs, first = np.unique(xs, return_index=True)
    ps = ps[first]
    if xs.size > MAX_POINTS:
        pick = np.unique(np.linspace(0, xs.size - 1, MAX_POINTS).round().astype(int))
        xs, ps = xs[pick], ps[pick]
    return xs, np.log(ps / (1 - ps))

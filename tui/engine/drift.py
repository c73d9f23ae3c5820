"""How far a later extract's column has moved from the training column.

The training column is kept as its nine deciles (the 10th to 90th percentiles): they bound
ten groups that each held a tenth of the training rows. The population stability index over
those groups, sum of (fresh − training) × ln(fresh / training) shares, measures the shift
(common practice in credit-risk monitoring; the usual reading — under 0.1 stable, 0.1 to
0.25 moderate, over 0.25 large — is from memory). Tied deciles merge their groups, whose
training share is then a tenth per decile merged.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

DECILE_PROBS = tuple(round(0.1 * k, 1) for k in range(1, 10))
"""The probabilities of the nine deciles."""
PSI_LARGE = 0.25
"""A stability index above this is a large shift (from memory, common practice)."""
_SHARE_FLOOR = 1e-4  # an empty group would make the logarithm infinite


def training_deciles(x: np.ndarray) -> tuple[float, ...] | None:
    """The nine deciles of the finite values (numpy's default quantile); None without any."""
    x = np.asarray(x, dtype=float)
    x = x[np.isfinite(x)]
    if x.size == 0:
        return None
    return tuple(float(v) for v in np.quantile(x, DECILE_PROBS))


def stability_index(deciles: Sequence[float], x: np.ndarray) -> float | None:
    """Population stability index of the finite values of ``x`` against the ten groups
    the training ``deciles`` bound (group j: x above j−1 deciles, at or below the next);
    None without finite values."""
    x = np.asarray(x, dtype=float)
    x = x[np.isfinite(x)]
    if x.size == 0:
        return None
    edges, merged = np.unique(np.asarray(deciles, dtype=float), return_counts=True)
    expected = np.append(merged, 10 - merged.sum()) / 10.0  # a tenth per decile merged
    # Row j of the groups: x ≤ edges[0], edges[0] < x ≤ edges[1], ..., x > edges[-1].
    fresh = np.bincount(np.searchsorted(edges, x, side="left"), minlength=edges.size + 1)
    actual = fresh / x.size
    a, e = np.maximum(actual, _SHARE_FLOOR), np.maximum(expected, _SHARE_FLOOR)
    return float(np.sum((a - e) * np.log(a / e)))

"""How far a later extract's column has moved from the training column.

The training column is kept as its nine deciles (the 10th to 90th percentiles): they bound
ten groups that each held a tenth of the training rows. The population stability index over
those groups, sum of (fresh − training) × ln(fresh / training) shares, measures the shift
(common practice in credit-risk monitoring; the usual reading — under 0.1 stable, 0.1 to
0.25 moderate, over 0.25 large — is from memory). Tied deciles merge their groups, whose
training share is then a tenth per decile merged (the rows at that value belong to it);
rows at a single decile count half on each side. On a column whose single values hold
about a tenth of the rows each the training shares are then only roughly a tenth, and
the index reads a little high (about 0.17 for such a column against itself).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

DECILE_PROBS = tuple(round(0.1 * k, 1) for k in range(1, 10))
"""The probabilities of the nine deciles."""
PSI_LARGE = 0.25
"""A stability index above this is a large shift (from memory, common practice)."""
MIN_DISTINCT_DECILES = 3
"""Fewer distinct deciles than this (a binary or near-constant column): no index."""
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
    the training ``deciles`` bound (values at a decile count half in each neighbouring
    group); None without finite values, or when the deciles take fewer than
    ``MIN_DISTINCT_DECILES`` values."""
    x = np.asarray(x, dtype=float)
    x = x[np.isfinite(x)]
    if x.size == 0:
        return None
    edges, merged = np.unique(np.asarray(deciles, dtype=float), return_counts=True)
    if edges.size < MIN_DISTINCT_DECILES:
        return None  # a two-value or constant column: its deciles cannot tell the shares
    # Training share up to each distinct decile: a tenth per decile merged into it.
    expected = np.diff(np.concatenate(([0.0], np.cumsum(merged) / 10.0, [1.0])))
    # Fresh share up to each edge, a value at the edge counted half on either side: on a
    # lumpy column many rows sit at a decile, and a decile of such a column cuts through
    # them (the training share below it is a tenth only when split so).
    xs = np.sort(x)
    below = np.searchsorted(xs, edges, side="left")
    at_or_below = np.searchsorted(xs, edges, side="right")
    return _index(merged, expected, below, at_or_below, x.size)


def stability_from_tally(
    deciles: Sequence[float], n: int, below: np.ndarray, at_or_below: np.ndarray
) -> float | None:
    """``stability_index`` from counts an engine tallied: ``n`` finite values, and how
    many lie below and at or below each of the ``deciles`` as given (ties included)."""
    if n == 0:
        return None
    given = np.asarray(deciles, dtype=float)
    edges, first, merged = np.unique(given, return_index=True, return_counts=True)
    if edges.size < MIN_DISTINCT_DECILES:
        return None
    expected = np.diff(np.concatenate(([0.0], np.cumsum(merged) / 10.0, [1.0])))
    below = np.asarray(below, dtype=float)[first]
    at_or_below = np.asarray(at_or_below, dtype=float)[first]
    return _index(merged, expected, below, at_or_below, n)


def _index(
    merged: np.ndarray, expected: np.ndarray, below: np.ndarray, at_or_below: np.ndarray, n: int
) -> float:
    # Several deciles at one value: that value's rows are the merged group's own.
    split = np.where(merged > 1, 1.0, 0.5)
    mid = (below + split * (at_or_below - below)) / n
    actual = np.diff(np.concatenate(([0.0], mid, [1.0])))
    a, e = np.maximum(actual, _SHARE_FLOOR), np.maximum(expected, _SHARE_FLOOR)
    return float(np.sum((a - e) * np.log(a / e)))

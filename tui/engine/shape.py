"""A hint of the curve's shape, read off a fitted spline. A hint, not a verdict."""

from __future__ import annotations

import numpy as np

LINEAR, MONOTONE, U_SHAPE, THRESHOLD = "linear", "monotone-curve", "u-shape", "threshold"
HUMP = "hump"
"""An inverted U (∩): the log-odds rise to an interior peak and fall again."""
SHAPES = (LINEAR, MONOTONE, U_SHAPE, HUMP, THRESHOLD)
TURNING = (U_SHAPE, HUMP)
"""Shapes with an interior turn."""

_TURN_SHARE = 0.25  # both arms of a turn must cover a quarter of the curve's rise
_EDGE_SHARE = 0.10  # steepest point this close to an end: a bending curve, not a step
_FLAT_SLOPE = 0.15  # a side is flat when its mean slope is under this share of the peak
_PEAK_RATIO = 3.0  # a step's peak slope is this many times the average slope


def curve_shape(grid: np.ndarray, log_odds: np.ndarray) -> str:
    """Classify a fitted log-odds curve over an ascending grid of x."""
    # Array methods and plain differences rather than np.diff and mean: the same numbers
    # (a mean is the sum over the count) with fewer calls, once for every scored column.
    f = np.asarray(log_odds, dtype=float)
    if f.size < 5 or not np.isfinite(f).all():
        return MONOTONE
    rise = float(f.max() - f.min())
    if rise < 1e-9:
        return LINEAR
    low, high = int(f.argmin()), int(f.argmax())
    for turn, sign, word in ((low, 1.0, U_SHAPE), (high, -1.0, HUMP)):
        left = sign * (f[0] - f[turn])
        right = sign * (f[-1] - f[turn])
        if 0 < turn < f.size - 1 and min(left, right) >= _TURN_SHARE * rise:
            return word
    x = np.asarray(grid)
    slope = np.abs((f[1:] - f[:-1]) / (x[1:] - x[:-1]))
    peak = int(slope.argmax())
    edge = max(1, int(_EDGE_SHARE * slope.size))
    if peak < edge or peak >= slope.size - edge:
        return MONOTONE
    steep = slope[peak]
    left_flat = _mean(slope[: max(1, peak - edge)]) < _FLAT_SLOPE * steep
    right_flat = _mean(slope[peak + edge :]) < _FLAT_SLOPE * steep
    if (left_flat or right_flat) and steep > _PEAK_RATIO * _mean(slope):
        return THRESHOLD
    return MONOTONE


def _mean(v: np.ndarray) -> np.floating:
    """``v.mean()`` for a non-empty 1-D float array: its sum over its count."""
    return v.sum() / v.size

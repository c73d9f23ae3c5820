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
    f = np.asarray(log_odds, dtype=float)
    if f.size < 5 or not np.all(np.isfinite(f)):
        return MONOTONE
    rise = float(f.max() - f.min())
    if rise < 1e-9:
        return LINEAR
    low, high = int(np.argmin(f)), int(np.argmax(f))
    for turn, sign, word in ((low, 1.0, U_SHAPE), (high, -1.0, HUMP)):
        left = sign * (f[0] - f[turn])
        right = sign * (f[-1] - f[turn])
        if 0 < turn < f.size - 1 and min(left, right) >= _TURN_SHARE * rise:
            return word
    slope = np.abs(np.diff(f) / np.diff(grid))
    peak = int(np.argmax(slope))
    edge = max(1, int(_EDGE_SHARE * slope.size))
    if peak < edge or peak >= slope.size - edge:
        return MONOTONE
    steep = slope[peak]
    left_flat = slope[: max(1, peak - edge)].mean() < _FLAT_SLOPE * steep
    right_flat = slope[peak + edge :].mean() < _FLAT_SLOPE * steep
    if (left_flat or right_flat) and steep > _PEAK_RATIO * slope.mean():
        return THRESHOLD
    return MONOTONE

"""The window a column's picture shows, set from the data alone.

The window must show what the picture is for: the groups' empirical logits and the
smoother. So x runs over the central ``CENTRAL`` share of the rows (widened to take in
every group's median), with a flag on each side where values lie beyond, and y over the
groups' ±1.96 SE intervals and the smoother. Fitted curves never widen it; they are
clipped to it, so the window does not move as another candidate is highlighted. The
review app and the report both draw in this window.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from tui.engine.compare import FormFit
from tui.engine.counts import ReducedCounts
from tui.engine.groups import LogitGroup, group_edges, group_index

Z95 = 1.96
"""Intervals reach ±1.96 standard errors of each group's empirical logit."""
CENTRAL = 0.95
"""x covers the central 95% of the rows (2.5th to 97.5th percentile), or the groups' span."""
PAD = 0.04
"""Share of each axis's span added on both sides, so no mark sits on the frame."""
SMOOTHER_REACH = 1.0
"""The smoother may widen y by at most this (log-odds) beyond the intervals: LOWESS in a
tail with no events runs to its clip and must not squash the groups."""
MIN_SPAN = 0.5
"""The narrowest y span (log-odds) a window is given."""


@dataclass(frozen=True)
class PlotWindow:
    """What a picture shows: the x and y limits, and whether values lie beyond x."""

    x_low: float
    x_high: float
    y_low: float
    y_high: float
    beyond_low: bool = False
    """Some rows have x below ``x_low``."""
    beyond_high: bool = False
    """Some rows have x above ``x_high``."""

    def grid(self, points: int = 241) -> np.ndarray:
        """Evenly spaced x across the window, for drawing curves."""
        return np.linspace(self.x_low, self.x_high, points)

    def clip(self, y: np.ndarray) -> np.ndarray:
        """``y`` with values outside the window set to NaN (not drawn)."""
        y = np.asarray(y, dtype=float).copy()
        y[(y < self.y_low) | (y > self.y_high) | ~np.isfinite(y)] = np.nan
        return y


def _padded(low: float, high: float, least: float) -> tuple[float, float]:
    if not (np.isfinite(low) and np.isfinite(high)):
        return -1.0, 1.0
    if high - low < least:
        middle = (low + high) / 2
        low, high = middle - least / 2, middle + least / 2
    pad = PAD * (high - low)
    return low - pad, high + pad


def plot_window(
    counts: ReducedCounts,
    groups: Sequence[LogitGroup],
    smoother: tuple[np.ndarray, np.ndarray] | None = None,
) -> PlotWindow:
    """The window for a column's groups and smoother (never for its fitted curves)."""
    share = (1.0 - CENTRAL) / 2
    low, high = (float(v) for v in counts.quantile([share, 1.0 - share]))
    medians = [g.median for g in groups]
    if medians:
        low, high = min(low, min(medians)), max(high, max(medians))
    x_span = high - low if high > low else max(abs(low), 1.0)
    x_low, x_high = _padded(low, high, x_span)
    beyond_low = bool(counts.distinct and counts.x[0] < x_low)
    beyond_high = bool(counts.distinct and counts.x[-1] > x_high)
    if groups:
        lows = [g.logit - Z95 * g.se for g in groups]
        highs = [g.logit + Z95 * g.se for g in groups]
        y_low, y_high = min(lows), max(highs)
    else:
        y_low, y_high = -1.0, 1.0
    if smoother is not None and smoother[0].size:
        sx, sy = smoother
        inside = sy[(sx >= x_low) & (sx <= x_high) & np.isfinite(sy)]
        if inside.size:
            y_low = max(min(y_low, float(inside.min())), y_low - SMOOTHER_REACH)
            y_high = min(max(y_high, float(inside.max())), y_high + SMOOTHER_REACH)
    y_low, y_high = _padded(y_low, y_high, MIN_SPAN)
    return PlotWindow(x_low, x_high, y_low, y_high, beyond_low, beyond_high)


def group_linear_predictor(counts: ReducedCounts, groups: int, row: FormFit) -> np.ndarray | None:
    """Each quantile group's mean fitted linear predictor under ``row``'s form (the groups
    of ``logit_groups(counts, groups)``, in the same order); None without a fit.

    Plotted against the groups' empirical logits, the points lie along the line y = x
    when the form fits: the check an analyst makes by eye after recoding.
    """
    if row.fit is None or row.recoding is None or counts.distinct == 0:
        return None
    edges = group_edges(counts, groups)
    which = group_index(edges, counts.x)
    eta = row.log_odds(counts.x)
    out = []
    for g in range(edges.size + 1):
        sel = which == g
        if sel.any():
            out.append(float(np.average(eta[sel], weights=counts.trials[sel])))
    return np.array(out)


def recoded_window(groups: Sequence[LogitGroup], predictor: np.ndarray) -> PlotWindow:
    """One range on both axes (the line y = x at 45°): the predictor and the intervals."""
    lows = [g.logit - Z95 * g.se for g in groups] + list(predictor)
    highs = [g.logit + Z95 * g.se for g in groups] + list(predictor)
    low, high = _padded(min(lows), max(highs), MIN_SPAN)
    return PlotWindow(low, high, low, high)

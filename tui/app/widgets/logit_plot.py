"""The picture of one column: empirical logits of the quantile groups with their
whiskers, the linear fit, and the highlighted candidate's curve, on the log-odds scale.

Every mark differs by its character as well as its colour, so the plot reads the same
without colour: groups ●, whiskers │, linear · · ·, candidate braille line, LOWESS smoother +.
"""

from __future__ import annotations

import numpy as np
from rich.console import RenderableType
from textual_plotext import PlotextPlot

from tui.app.fit_cache import ColumnFits
from tui.engine.compare import FormFit

Z95 = 1.96
"""Whiskers reach ±1.96 standard errors of each group's empirical logit."""
GROUP_MARK, WHISKER_MARK, LINEAR_MARK, CURVE_MARK = "●", "│", "·", "braille"
SMOOTH_MARK = "+"
CURVE_POINTS = 241
FRAME_ROWS = 3
"""Rows plotext spends outside its canvas: the top and bottom axes and the x labels."""
CURVE_REACH = 3.0
"""Curves may widen the y range by up to this many whisker spans each way, ..."""
MAX_REACH = 3.0
"""... but by no more than this (log-odds) beyond one whisker span: one extreme curve
must not squash the groups into a line."""
MIN_SPAN = 1.0
"""The narrowest whisker span (log-odds) the reach is measured in."""
NICE_STEPS = (1.0, 2.0, 2.5, 5.0)
"""Steps per canvas row, times a power of ten: every row lies on a round value."""
MAX_LABELS = 8
LABEL_EVERY = (1, 2, 4, 5, 10, 20, 50)


class LogitPlot(PlotextPlot):
    """Draws a ``ColumnFits`` and one highlighted candidate."""

    def __init__(self, *, id: str | None = None) -> None:  # noqa: A002 (Textual's name)
        super().__init__(id=id)
        self._fits: ColumnFits | None = None
        self._chosen: FormFit | None = None

    def draw(self, fits: ColumnFits | None, chosen: FormFit | None) -> None:
        """Show these fits with ``chosen`` as the candidate curve (None: groups only)."""
        self._fits, self._chosen = fits, chosen
        self.refresh()

    def render(self) -> RenderableType:
        plt = self.plt
        plt.clear_figure()
        fits = self._fits
        if fits is not None and fits.groups:
            self._draw_fits(fits)
        return super().render()

    def _draw_fits(self, fits: ColumnFits) -> None:
        plt = self.plt
        medians = np.array([g.median for g in fits.groups])
        logits = np.array([g.logit for g in fits.groups])
        reach = Z95 * np.array([g.se for g in fits.groups])
        low, high = float(fits.counts.x[0]), float(fits.counts.x[-1])
        if high <= low:
            low, high = low - 1.0, high + 1.0
        grid = np.linspace(low, high, CURVE_POINTS)
        linear = fits.table.linear if fits.table is not None else None
        curves = [f for f in (linear, self._chosen) if f is not None and f.fit is not None]
        values = [f.log_odds(grid) for f in curves]
        bottom, top = _y_limits(logits - reach, logits + reach, values)
        canvas_rows = max(self.size.height - FRAME_ROWS, 2)
        bottom, top, ticks, labels = y_axis(bottom, top, canvas_rows)
        width = max(self.size.width - 8, 10)  # the canvas, less the y-axis labels
        if linear is not None and linear.fit is not None:
            dots = np.linspace(low, high, max(width // 2, 5))
            plt.scatter(
                dots.tolist(), linear.log_odds(dots).tolist(), marker=LINEAR_MARK, color="cyan"
            )
        chosen = self._chosen
        if chosen is not None and chosen.fit is not None and chosen is not linear:
            plt.plot(
                grid.tolist(), chosen.log_odds(grid).tolist(), marker=CURVE_MARK, color="orange"
            )
        if fits.smoother is not None and fits.smoother[0].size:
            sx, sy = fits.smoother
            keep = (sy >= bottom) & (sy <= top)
            step = max(1, int(sx.size // max(width // 3, 5)))  # sparse, so curves show through
            plt.scatter(
                sx[keep][::step].tolist(), sy[keep][::step].tolist(), marker=SMOOTH_MARK,
                color="green",
            )  # fmt: skip
        rows = max(self.size.height, 4)
        for m, centre, r in zip(medians, logits, reach, strict=True):
            ys = np.linspace(centre - r, centre + r, 3 * rows)
            plt.scatter([float(m)] * ys.size, ys.tolist(), marker=WHISKER_MARK, color="default")
        plt.scatter(medians.tolist(), logits.tolist(), marker=GROUP_MARK, color="default")
        plt.xlim(low, high)
        plt.ylim(bottom, top)
        plt.yticks(ticks, labels)


def _y_limits(lows: np.ndarray, highs: np.ndarray, curves: list[np.ndarray]) -> tuple[float, float]:
    """The whiskers' span, widened to take in the curves over the plotted x range, within
    the reach allowed each way."""
    bottom, top = float(np.min(lows)), float(np.max(highs))
    span = max(top - bottom, MIN_SPAN)
    finite = [c[np.isfinite(c)] for c in curves]
    values = np.concatenate(finite) if finite else np.zeros(0)
    reach = max(span, min(CURVE_REACH * span, MAX_REACH))
    if values.size:
        bottom = max(min(bottom, float(values.min())), bottom - reach)
        top = min(max(top, float(values.max())), top + reach)
    return bottom, top


def y_axis(bottom: float, top: float, rows: int) -> tuple[float, float, list[float], list[str]]:
    """Limits that put every one of the canvas ``rows`` on a round value, and evenly
    spaced ticks with their labels on those rows.

    plotext draws y on row ``floor(0.5 + (rows - 1) * (y - low) / (high - low))``, so
    with ``high - low = (rows - 1) * step`` row r shows exactly ``low + r * step``.
    """
    rows = max(rows, 2)
    if not (np.isfinite(bottom) and np.isfinite(top)):
        bottom, top = -1.0, 1.0
    need = max(top - bottom, 1e-9) / (rows - 1)
    power = 10.0 ** np.floor(np.log10(need))
    candidates = [m * power * scale for scale in (1.0, 10.0, 100.0) for m in NICE_STEPS]
    for step in candidates:
        low = np.floor(bottom / step + 1e-9) * step
        if low + (rows - 1) * step >= top - 1e-9 * step:
            break
    spare = int(np.floor((low + (rows - 1) * step - top) / step + 1e-9))
    low -= (spare // 2) * step  # the rows not needed: half above, half below
    # Label every row, or every 2nd, 4th, … so the labelled values stay round too.
    every = next(e for e in LABEL_EVERY if -(-rows // e) <= MAX_LABELS)
    ticks = [round(float(low + r * step), 9) + 0.0 for r in range(0, rows, every)]
    exact = [d for d in range(7) if all(abs(round(t, d) - t) < 1e-6 * step for t in ticks)]
    digits = exact[0] if exact else 6
    return (
        float(ticks[0]),
        float(low + (rows - 1) * step),
        ticks,
        [f"{t:.{digits}f}" for t in ticks],
    )

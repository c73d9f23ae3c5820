"""The picture of one column: empirical logits of the quantile groups with their
whiskers, the linear fit, and the highlighted candidate's curve, on the log-odds scale.

Every mark differs by its character as well as its colour, so the plot reads the same
without colour: groups ●, whiskers │, linear · · ·, candidate braille line.
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
CURVE_POINTS = 241


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
        rows = max(self.size.height, 4)
        for m, centre, r in zip(medians, logits, reach, strict=True):
            ys = np.linspace(centre - r, centre + r, 3 * rows)
            plt.scatter([float(m)] * ys.size, ys.tolist(), marker=WHISKER_MARK, color="default")
        plt.scatter(medians.tolist(), logits.tolist(), marker=GROUP_MARK, color="default")
        plt.xlim(low, high)
        plt.ylim(bottom, top)


def _y_limits(lows: np.ndarray, highs: np.ndarray, curves: list[np.ndarray]) -> tuple[float, float]:
    """The whiskers' span, widened for the curves by at most that span again each way."""
    bottom, top = float(np.min(lows)), float(np.max(highs))
    span = max(top - bottom, 0.5)
    finite = [c[np.isfinite(c)] for c in curves]
    values = np.concatenate(finite) if finite else np.zeros(0)
    if values.size:
        bottom = max(min(bottom, float(values.min())), bottom - span)
        top = min(max(top, float(values.max())), top + span)
    pad = 0.05 * (top - bottom)
    return bottom - pad, top + pad

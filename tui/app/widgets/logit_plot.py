"""The picture of one column: empirical logits of the quantile groups with their
whiskers, the linear fit, and the highlighted candidate's curve, on the log-odds scale.

Every mark differs by its character as well as its colour, so the plot reads the same
without colour: groups ●, whiskers │, linear · · ·, candidate braille line, LOWESS smoother +,
◂ ▸ values beyond the window. The recoded view puts each group at the highlighted form's
mean fitted linear predictor, with the line y = x (· · ·) it lies along when the form fits.
"""

from __future__ import annotations

import numpy as np
from rich.console import RenderableType
from textual_plotext import PlotextPlot

from tui.app.fit_cache import ColumnFits
from tui.app.widgets.steady import NoScrollSize
from tui.engine.compare import FormFit
from tui.engine.plot_window import (
    Z95,
    PlotWindow,
    group_linear_predictor,
    plot_window,
    recoded_window,
)

GROUP_MARK, WHISKER_MARK, LINEAR_MARK, CURVE_MARK = "●", "│", "·", "braille"
SMOOTH_MARK = "+"
BEYOND_LOW, BEYOND_HIGH = "◂", "▸"
"""On the bottom edge where values lie beyond the window's x range."""
CURVE_POINTS = 241
FRAME_ROWS = 3
"""Rows plotext spends outside its canvas: the top and bottom axes and the x labels."""
NICE_STEPS = (1.0, 2.0, 2.5, 5.0)
"""Steps per canvas row, times a power of ten: every row lies on a round value."""
MAX_LABELS = 8
LABEL_EVERY = (1, 2, 4, 5, 10, 20, 50)


class LogitPlot(NoScrollSize, PlotextPlot):
    """Draws a ``ColumnFits`` and one highlighted candidate, in the window the engine sets
    from the groups and the smoother (``plot_window``): the highlight never moves it."""

    def __init__(self, *, id: str | None = None) -> None:  # noqa: A002 (Textual's name)
        super().__init__(id=id)
        self._fits: ColumnFits | None = None
        self._chosen: FormFit | None = None
        self.recoded = False
        """Show the groups against the chosen form's linear predictor instead."""
        self._window: tuple[int, PlotWindow] | None = None  # per fits object
        self._drawn: tuple[tuple, RenderableType] | None = None  # the last picture, by what

    def draw(self, fits: ColumnFits | None, chosen: FormFit | None, recoded: bool = False) -> None:
        """Show these fits with ``chosen`` as the candidate curve (None: groups only);
        ``recoded``: the groups' logits against ``chosen``'s fitted linear predictor."""
        if fits is self._fits and chosen is self._chosen and recoded == self.recoded:
            return  # the same picture (the table's cursor set again): no frame to draw
        self._fits, self._chosen, self.recoded = fits, chosen, recoded
        self.refresh()

    def window(self) -> PlotWindow | None:
        """The window of the fits shown (computed once per fits)."""
        fits = self._fits
        if fits is None or not fits.groups:
            return None
        if self._window is None or self._window[0] != id(fits):
            self._window = (id(fits), plot_window(fits.counts, fits.groups, fits.smoother))
        return self._window[1]

    def render(self) -> RenderableType:
        # Laying the column screen out again (a line or the table changing height) draws
        # every widget again: the picture is made again only when what it shows changed
        # (plotext takes tens of ms for it).
        shown = (self._fits, self._chosen, self.recoded, self.size, self.app.theme, self.theme)
        kept = self._drawn
        if kept is not None and _same(kept[0], shown):
            return kept[1]
        picture = self._picture()
        self._drawn = (shown, picture)
        return picture

    def _picture(self) -> RenderableType:
        plt = self.plt
        plt.clear_figure()
        fits = self._fits
        if fits is not None and fits.groups:
            if self.recoded:
                self._draw_recoded(fits)
            else:
                self._draw_fits(fits)
        return super().render()

    def _limits(self, window: PlotWindow) -> tuple[float, float]:
        canvas_rows = max(self.size.height - FRAME_ROWS, 2)
        bottom, top, ticks, labels = y_axis(window.y_low, window.y_high, canvas_rows)
        self.plt.xlim(window.x_low, window.x_high)
        self.plt.ylim(bottom, top)
        self.plt.yticks(ticks, labels)
        return bottom, top

    def _draw_groups(self, xs: np.ndarray, fits: ColumnFits) -> None:
        plt = self.plt
        logits = np.array([g.logit for g in fits.groups])
        reach = Z95 * np.array([g.se for g in fits.groups])
        rows = max(self.size.height, 4)
        for m, centre, r in zip(xs, logits, reach, strict=True):
            ys = np.linspace(centre - r, centre + r, 3 * rows)
            plt.scatter([float(m)] * ys.size, ys.tolist(), marker=WHISKER_MARK, color="default")
        plt.scatter(xs.tolist(), logits.tolist(), marker=GROUP_MARK, color="default")

    def _draw_fits(self, fits: ColumnFits) -> None:
        plt = self.plt
        window = self.window()
        assert window is not None  # fits with groups
        bottom, top = self._limits(window)
        width = max(self.size.width - 8, 10)  # the canvas, less the y-axis labels
        grid = window.grid(CURVE_POINTS)
        linear = fits.table.linear if fits.table is not None else None
        if linear is not None and linear.fit is not None:
            dots = window.grid(max(width // 2, 5))
            ys = window.clip(linear.log_odds(dots))
            keep = np.isfinite(ys)
            plt.scatter(dots[keep].tolist(), ys[keep].tolist(), marker=LINEAR_MARK, color="cyan")
        chosen = self._chosen
        if chosen is not None and chosen.fit is not None and chosen is not linear:
            ys = window.clip(chosen.log_odds(grid))
            for part in _runs(grid, ys):  # a curve leaving the window is cut, not bent
                plt.plot(part[0].tolist(), part[1].tolist(), marker=CURVE_MARK, color="orange")
        if fits.smoother is not None and fits.smoother[0].size:
            sx, sy = fits.smoother
            keep = (sy >= bottom) & (sy <= top) & (sx >= window.x_low) & (sx <= window.x_high)
            step = max(1, int(sx.size // max(width // 3, 5)))  # sparse, so curves show through
            plt.scatter(
                sx[keep][::step].tolist(), sy[keep][::step].tolist(), marker=SMOOTH_MARK,
                color="green",
            )  # fmt: skip
        self._draw_groups(np.array([g.median for g in fits.groups]), fits)
        for beyond, x, mark in (
            (window.beyond_low, window.x_low, BEYOND_LOW),
            (window.beyond_high, window.x_high, BEYOND_HIGH),
        ):
            if beyond:  # values lie beyond this edge of the window
                plt.scatter([x], [bottom], marker=mark, color="default")

    def _draw_recoded(self, fits: ColumnFits) -> None:
        chosen = self._chosen
        predictor = None
        if chosen is not None:
            predictor = group_linear_predictor(fits.counts, fits.request.groups, chosen)
        if predictor is None or predictor.size != len(fits.groups):
            return
        window = recoded_window(fits.groups, predictor)
        bottom, top = self._limits(window)
        line = np.linspace(max(window.x_low, bottom), min(window.x_high, top), CURVE_POINTS)
        self.plt.plot(line.tolist(), line.tolist(), marker=LINEAR_MARK, color="cyan")
        self._draw_groups(predictor, fits)


def _same(a: tuple, b: tuple) -> bool:
    """The fits and the form by identity (they are never changed in place), the rest by value."""
    return a[0] is b[0] and a[1] is b[1] and a[2:] == b[2:]


def _runs(x: np.ndarray, y: np.ndarray) -> list[tuple[np.ndarray, np.ndarray]]:
    """The stretches of a curve inside the window (NaN marks where it is outside)."""
    inside = np.isfinite(y)
    runs, start = [], None
    for i, ok in enumerate([*inside, False]):
        if ok and start is None:
            start = i
        elif not ok and start is not None:
            if i - start >= 2:
                runs.append((x[start:i], y[start:i]))
            start = None
    return runs


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

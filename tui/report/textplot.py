"""A character plot of grouped empirical logits and two fitted curves, for Markdown, in
the window the review screen uses (``tui.engine.plot_window``)."""

from __future__ import annotations

import math

from tui.engine.plot_window import PlotWindow
from tui.report.content import Curve, GroupLine

WIDTH, HEIGHT = 64, 16


def text_plot(
    groups: tuple[GroupLine, ...],
    curve: Curve | None,
    window: PlotWindow | None = None,
    smoother: tuple[tuple[float, ...], tuple[float, ...]] | None = None,
) -> str:
    """Rows of characters: o group logit, | its ±1.96 SE, . linear fit, * accepted form,
    + LOWESS smoother, < > values beyond the window."""
    points = [g for g in groups if g.logit is not None and g.median is not None]
    if window is None or len(points) < 2:
        return "(too few groups to draw)"
    x0, x1, y0, y1 = window.x_low, window.x_high, window.y_low, window.y_high
    grid = [[" "] * WIDTH for _ in range(HEIGHT)]

    def col(x: float) -> int:
        return min(WIDTH - 1, max(0, round((x - x0) / (x1 - x0) * (WIDTH - 1))))

    def row(y: float) -> int:
        return min(HEIGHT - 1, max(0, HEIGHT - 1 - round((y - y0) / (y1 - y0) * (HEIGHT - 1))))

    def put(x: float, y: float, mark: str) -> None:
        if math.isfinite(y) and y0 <= y <= y1:
            grid[row(y)][col(x)] = mark

    if smoother:
        for x, y in zip(*smoother, strict=True):
            put(x, y, "+")
    if curve:
        for x, a, b in zip(curve.x, curve.linear, curve.accepted, strict=True):
            put(x, a, ".")
            put(x, b, "*")
    for g in points:
        c = col(g.median)  # type: ignore[arg-type]
        lo = row(g.logit - 1.96 * g.se)  # type: ignore[operator]
        hi = row(g.logit + 1.96 * g.se)  # type: ignore[operator]
        for r in range(hi, lo + 1):
            grid[r][c] = "|"
        grid[row(g.logit)][c] = "o"  # type: ignore[arg-type]
    if window.beyond_low:
        grid[HEIGHT - 1][0] = "<"
    if window.beyond_high:
        grid[HEIGHT - 1][WIDTH - 1] = ">"
    label_w = 8
    out = []
    for r, line in enumerate(grid):
        y = y1 - r * (y1 - y0) / (HEIGHT - 1)
        label = f"{y:7.2f} " if r in (0, HEIGHT // 2, HEIGHT - 1) else " " * label_w
        out.append(label + "|" + "".join(line).rstrip())
    out.append(" " * label_w + "+" + "-" * WIDTH)
    left, right = f"{x0:.4g}", f"{x1:.4g}"
    out.append(" " * (label_w + 1) + left + " " * max(1, WIDTH - len(left) - len(right)) + right)
    out.append(
        " " * label_w + " log-odds against x (central 95% of rows); o group logit, "
        "| ±1.96 SE, . linear, * accepted, + LOWESS, < > values beyond"
    )
    return "\n".join(out)

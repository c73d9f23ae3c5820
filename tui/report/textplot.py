"""A character plot of grouped empirical logits and two fitted curves, for Markdown."""

from __future__ import annotations

from tui.report.content import Curve, GroupLine

WIDTH, HEIGHT = 64, 16


def text_plot(groups: tuple[GroupLine, ...], curve: Curve | None) -> str:
    """Rows of characters: o group logit, | its ±1.96 SE, . linear fit, * accepted form."""
    points = [g for g in groups if g.logit is not None and g.median is not None]
    xs = [g.median for g in points] + (list(curve.x) if curve else [])
    ys = [g.logit + s * 1.96 * g.se for g in points for s in (-1, 1)]  # type: ignore[operator]
    if curve:
        ys += list(curve.linear) + list(curve.accepted)
    xs = [v for v in xs if v is not None]
    if len(xs) < 2 or not ys:
        return "(too few groups to draw)"
    x0, x1 = min(xs), max(xs)
    y0, y1 = min(ys), max(ys)
    if x1 == x0:
        x1 = x0 + 1.0
    if y1 == y0:
        y1 = y0 + 1.0
    grid = [[" "] * WIDTH for _ in range(HEIGHT)]

    def col(x: float) -> int:
        return round((x - x0) / (x1 - x0) * (WIDTH - 1))

    def row(y: float) -> int:
        return HEIGHT - 1 - round((y - y0) / (y1 - y0) * (HEIGHT - 1))

    if curve:
        for x, a, b in zip(curve.x, curve.linear, curve.accepted, strict=True):
            grid[row(a)][col(x)] = "."
            grid[row(b)][col(x)] = "*"
    for g in points:
        c = col(g.median)  # type: ignore[arg-type]
        lo = row(g.logit - 1.96 * g.se)  # type: ignore[operator]
        hi = row(g.logit + 1.96 * g.se)  # type: ignore[operator]
        for r in range(hi, lo + 1):
            grid[r][c] = "|"
        grid[row(g.logit)][c] = "o"  # type: ignore[arg-type]
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
        " " * label_w + " log-odds against x (first to last group median); "
        "o group logit, | ±1.96 SE, . linear, * accepted"
    )
    return "\n".join(out)

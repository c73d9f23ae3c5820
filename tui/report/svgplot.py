"""The grouped empirical logits and fitted curves as inline SVG (no scripts, no links)."""

from __future__ import annotations

from tui.report.content import Curve, GroupLine

W, H, PAD = 560, 300, 48


def svg_plot(groups: tuple[GroupLine, ...], curve: Curve | None) -> str:
    points = [g for g in groups if g.logit is not None and g.median is not None]
    xs = [g.median for g in points] + (list(curve.x) if curve else [])
    ys = [g.logit + s * 1.96 * g.se for g in points for s in (-1, 1)]  # type: ignore[operator]
    if curve:
        ys += list(curve.linear) + list(curve.accepted)
    if len(xs) < 2 or not ys:
        return "<p>(too few groups to draw)</p>"
    x0, x1, y0, y1 = min(xs), max(xs), min(ys), max(ys)  # type: ignore[type-var]
    x1 = x1 if x1 > x0 else x0 + 1
    y1 = y1 if y1 > y0 else y0 + 1

    def px(x: float) -> float:
        return PAD + (x - x0) / (x1 - x0) * (W - 2 * PAD)

    def py(y: float) -> float:
        return H - PAD - (y - y0) / (y1 - y0) * (H - 2 * PAD)

    parts = [
        f'<svg width="{W}" height="{H}" '
        f'viewBox="0 0 {W} {H}" role="img" aria-label="grouped empirical logits">',
        f'<rect x="0" y="0" width="{W}" height="{H}" fill="white"/>',
        f'<line x1="{PAD}" y1="{H - PAD}" x2="{W - PAD}" y2="{H - PAD}" stroke="black"/>',
        f'<line x1="{PAD}" y1="{PAD}" x2="{PAD}" y2="{H - PAD}" stroke="black"/>',
    ]
    if curve:
        for values, style in ((curve.linear, 'stroke-dasharray="4 3"'), (curve.accepted, "")):
            path = " ".join(
                f"{px(x):.1f},{py(y):.1f}" for x, y in zip(curve.x, values, strict=True)
            )
            parts.append(
                f'<polyline points="{path}" fill="none" stroke="black" stroke-width="1.5" {style}/>'
            )
    for g in points:
        cx = px(g.median)  # type: ignore[arg-type]
        lo = py(g.logit - 1.96 * g.se)  # type: ignore[operator]
        hi = py(g.logit + 1.96 * g.se)  # type: ignore[operator]
        parts.append(
            f'<line x1="{cx:.1f}" y1="{lo:.1f}" x2="{cx:.1f}" y2="{hi:.1f}" stroke="black"/>'
        )
        parts.append(f'<circle cx="{cx:.1f}" cy="{py(g.logit):.1f}" r="4" fill="black"/>')  # type: ignore[arg-type]
    parts.append(f'<text x="{PAD}" y="{H - 16}" font-size="11">{x0:.4g}</text>')
    parts.append(
        f'<text x="{W - PAD}" y="{H - 16}" font-size="11" text-anchor="end">{x1:.4g}</text>'
    )
    parts.append(f'<text x="4" y="{PAD}" font-size="11">{y1:.2f}</text>')
    parts.append(f'<text x="4" y="{H - PAD}" font-size="11">{y0:.2f}</text>')
    parts.append("</svg>")
    return "\n".join(parts)

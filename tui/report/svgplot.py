"""The report's picture as inline SVG drawn by matplotlib: ticks and labels on both axes,
axis titles, the groups with their intervals, the linear and accepted curves, the LOWESS
smoother and a legend, in the window the review screen uses. The SVG is cut down to what
an HTML page needs inline: no XML prolog, no DTD, no namespace URLs, no metadata, no
script, text kept as text; ids are salted per column so several pictures share a page."""

from __future__ import annotations

import io
import re

from tui.report.content import DecisionSection

WIDTH_IN, HEIGHT_IN = 7.0, 4.2
"""Inches: about the width of a printed page's text block."""
NO_METADATA = {"Creator": None, "Date": None, "Format": None, "Type": None}
_DROPPED = [
    re.compile(r"<\?xml[^>]*\?>\s*"),
    re.compile(r"<!DOCTYPE[^>]*>\s*", re.DOTALL),
    re.compile(r'\s+xmlns(:\w+)?="[^"]*"'),
    re.compile(r"<metadata>.*?</metadata>\s*", re.DOTALL),
]


def svg_plot(d: DecisionSection, outcome: str) -> str:
    """The decision's picture as an ``<svg>`` element (or a short note when too few
    groups can be shown)."""
    points = [g for g in d.groups if g.logit is not None and g.median is not None]
    window = d.window
    if window is None or len(points) < 2:
        return "<p>(too few groups to draw)</p>"
    # matplotlib takes about a second to import: loaded here, only when a report draws,
    # so that every other command (scan, replay, ...) starts without it.
    import matplotlib
    from matplotlib.figure import Figure

    style = {"svg.hashsalt": f"bendwise-{d.column}", "svg.fonttype": "none", "font.size": 9}
    with matplotlib.rc_context(style):
        fig = Figure(figsize=(WIDTH_IN, HEIGHT_IN))
        ax = fig.add_subplot()
        if d.smoother:
            ax.plot(*d.smoother, color="#2a7d2a", linestyle=":", linewidth=1.6,
                    label="LOWESS smoother")  # fmt: skip
        if d.curve:
            ax.plot(d.curve.x, d.curve.linear, color="#555555", linestyle="--", linewidth=1.2,
                    label="linear fit")  # fmt: skip
            ax.plot(d.curve.x, d.curve.accepted, color="#b35900", linewidth=1.8,
                    label=f"accepted: {d.form}")  # fmt: skip
        ax.errorbar(
            [g.median for g in points],
            [g.logit for g in points],
            yerr=[1.96 * g.se for g in points],  # type: ignore[operator]
            fmt="o", color="black", markersize=5, capsize=3, linewidth=1,
            label="quantile group: empirical logit ± 1.96 SE",
        )  # fmt: skip
        beyond = [(window.beyond_low, window.x_low, "<"), (window.beyond_high, window.x_high, ">")]
        shown = [(x, m) for flag, x, m in beyond if flag]
        for i, (x, mark) in enumerate(shown):
            label = "values beyond the window" if i == 0 else None
            ax.plot([x], [window.y_low], marker=mark, color="black", linestyle="none",
                    markersize=7, clip_on=False, label=label)  # fmt: skip
        ax.set_xlim(window.x_low, window.x_high)
        ax.set_ylim(window.y_low, window.y_high)
        ax.set_xlabel(f"{d.column} (central 95% of rows)")
        ax.set_ylabel(f"log-odds of {outcome}")
        ax.grid(True, color="#dddddd", linewidth=0.6)
        ax.legend(loc="best", fontsize=8, framealpha=0.9)
        fig.tight_layout()
        out = io.StringIO()
        fig.savefig(out, format="svg", metadata=NO_METADATA)
    svg = out.getvalue()
    for pattern in _DROPPED:
        svg = pattern.sub("", svg)
    # matplotlib names its groups figure_1, axes_1, ... in every picture: ids nothing
    # refers to are dropped, so pictures on one page never share an id.
    used = set(re.findall(r"#([\w.-]+)", svg))
    svg = re.sub(r'\s+id="([^"]+)"', lambda m: m[0] if m[1] in used else "", svg)
    label = f'role="img" aria-label="{_attr(d.column)}: grouped empirical logits and fits"'
    return svg.replace("<svg ", f"<svg {label} ", 1).strip()


def _attr(text: str) -> str:
    return (
        text.replace("&", "&amp;").replace('"', "&quot;").replace("<", "&lt;").replace(">", "&gt;")
    )

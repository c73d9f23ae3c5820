"""The report as one self-contained HTML file: inline style and SVG, no scripts, no links."""

from __future__ import annotations

from html import escape

from tui.report.content import DecisionSection, ReportContent
from tui.report.missing_part import missing_sentences
from tui.report.numbers import evidence_words, fmt, fmt_p, fmt_x
from tui.report.svgplot import svg_plot
from tui.table_rules import DF_RULE, LR_DASH

STYLE = """
body { font-family: sans-serif; max-width: 60em; margin: 2em auto; line-height: 1.4; }
table { border-collapse: collapse; margin: 0.5em 0 1em; }
th, td { border: 1px solid #888; padding: 0.2em 0.5em; text-align: left; }
td.num { text-align: right; }
svg { max-width: 100%; height: auto; }
tr.accepted td { font-weight: bold; }
"""


def _table(header: list[str], rows: list[list[str]], classes: list[str] | None = None) -> str:
    head = "".join(f"<th>{escape(h)}</th>" for h in header)
    body = []
    for i, r in enumerate(rows):
        cls = f' class="{classes[i]}"' if classes and classes[i] else ""
        body.append(f"<tr{cls}>" + "".join(f"<td>{escape(c)}</td>" for c in r) + "</tr>")
    return f"<table><thead><tr>{head}</tr></thead><tbody>{''.join(body)}</tbody></table>"


def _decision(d: DecisionSection, outcome: str) -> str:
    parts = [
        f"<h3>{escape(d.column)}</h3>",
        f"<p><strong>Accepted form:</strong> {escape(d.form)} — {escape(d.in_words)}.</p>",
        f"<p>Output columns: {escape(', '.join(d.outputs))}. Decided {escape(d.decided_at)}"
        + (f" by {escape(d.decided_by)}" if d.decided_by else "")
        + ".</p>",
    ]
    shown = evidence_words(d.evidence)
    if shown:
        parts.append(f"<p>Evidence recorded at decision time: {escape(shown)}.</p>")
    rows = [
        [f.label, str(f.df), fmt(f.deviance), fmt(f.aic), fmt(f.delta_aic), fmt_p(f.lr_p),
         f.status, "; ".join(f.notes)]
        for f in d.forms
    ]  # fmt: skip
    classes = ["accepted" if f.accepted else "" for f in d.forms]
    header = ["form", "df", "deviance", "AIC", "ΔAIC", "LR p vs linear", "fit status", "notes"]
    parts.append(
        f"<p>Each form's fit status is one of ok, separation, not-converged or failed; the "
        f"accepted form is marked. {escape(DF_RULE)} {escape(LR_DASH)}."
        + (f" {escape(d.lr_note)}." if d.lr_note else "")
        + "</p>"
    )
    parts.append(_table(header, rows, classes))
    parts.append(f"<p>{escape(d.shares)}</p>")
    grows = [
        [str(g.rank), fmt_x(g.median), g.n, g.events, g.nonevents, fmt(g.logit, 3), fmt(g.se, 3)]
        for g in d.groups
    ]
    parts.append(
        _table(["group", "median x", "rows", "events", "non-events", "logit", "SE"], grows)
    )
    parts.append(svg_plot(d, outcome))
    parts.append(
        "<p>Dots: group empirical logits with ±1.96 SE; dashed: linear fit; solid: accepted "
        "form; dotted: LOWESS smoother. The window spans the central 95% of rows and the "
        "groups (&lt; &gt; where values lie beyond) and the groups' intervals; curves are "
        "cut at its edges.</p>"
    )
    if d.missing is not None:
        text = " ".join(missing_sentences(d.missing)).replace("`", "")
        parts.append(f"<p>{escape(text)}</p>")
    parts.append(f"<p><strong>Note:</strong> {escape(d.note or '(none recorded)')}</p>")
    return "\n".join(parts)


def render_html(report: ReportContent) -> str:
    """The whole report as a standalone HTML document."""
    kv = lambda items: _table(["item", "value"], [[k, v] for k, v in items])  # noqa: E731
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        "<title>Predictor form decisions</title>",
        f"<style>{STYLE}</style></head><body>",
        "<h1>Predictor form decisions</h1>",
        f"<p>{escape(report.intro)}</p>",
        "<h2>Data</h2>",
        kv(report.fingerprint.items()),
        "<h2>Scan summary</h2>",
        kv(report.summary.items()),
        "<h2>Decisions</h2>",
    ]
    if not report.decisions:
        parts.append("<p>No recodings recorded.</p>")
    parts += [_decision(d, report.fingerprint["outcome"]) for d in report.decisions]
    if report.set_aside:
        parts.append("<h2>Set aside</h2><ul>")
        parts += [f"<li>{escape(c)}: {escape(n or '(no note)')}</li>" for c, n in report.set_aside]
        parts.append("</ul>")
    parts += [
        "<h2>Output checking</h2>",
        f"<p>{escape(report.cell_rule)}</p>",
        f"<p>{escape(report.derived)}</p>",
        "<h2>Cautions</h2><ul>",
    ]
    parts += [f"<li>{escape(c)}</li>" for c in report.cautions]
    parts += ["</ul>", f"<p>{escape(report.dated_line)}</p>", "</body></html>", ""]
    return "\n".join(parts)

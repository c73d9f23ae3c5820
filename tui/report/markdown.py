"""The report as Markdown (plots as preformatted text)."""

from __future__ import annotations

from tui.report.content import DecisionSection, ReportContent
from tui.report.missing_part import missing_sentences
from tui.report.numbers import evidence_words, fmt, fmt_p, fmt_x
from tui.report.textplot import text_plot
from tui.table_rules import DF_RULE, LR_DASH


def _table(header: list[str], rows: list[list[str]]) -> list[str]:
    clean = [[c.replace("|", "\\|") for c in r] for r in rows]
    out = ["| " + " | ".join(header) + " |", "|" + "|".join("---" for _ in header) + "|"]
    out += ["| " + " | ".join(r) + " |" for r in clean]
    return out


def _decision(d: DecisionSection) -> list[str]:
    out = [f"### {d.column}", "", f"**Accepted form:** {d.form} — {d.in_words}.", ""]
    by = f" by {d.decided_by}" if d.decided_by else ""
    out.append(
        f"Output columns: {', '.join(f'`{o}`' for o in d.outputs)}. Decided {d.decided_at}{by}."
    )
    out.append("")
    shown = evidence_words(d.evidence)
    if shown:
        out += [f"Evidence recorded at decision time: {shown}.", ""]
    out += [f"Candidate forms on this data (each form's fit status is one of ok, separation, "
            f"not-converged or failed; the accepted form in bold). {DF_RULE} {LR_DASH}."
            f"{_note(d.lr_note)}",
            ""]  # fmt: skip
    rows = [
        [
            ("**" + f.label + "**") if f.accepted else f.label,
            str(f.df),
            fmt(f.deviance),
            fmt(f.aic),
            fmt(f.delta_aic),
            fmt_p(f.lr_p),
            f.status,
            "; ".join(f.notes),
        ]
        for f in d.forms
    ]
    header = ["form", "df", "deviance", "AIC", "ΔAIC", "LR p vs linear", "fit status", "notes"]
    out += _table(header, rows)
    out += ["", d.shares, "", "Quantile groups:", ""]
    grows = [
        [str(g.rank), fmt_x(g.median), g.n, g.events, g.nonevents, fmt(g.logit, 3), fmt(g.se, 3)]
        for g in d.groups
    ]
    out += _table(["group", "median x", "rows", "events", "non-events", "logit", "SE"], grows)
    out += ["", "```", text_plot(d.groups, d.curve, d.window, d.smoother), "```", ""]
    if d.missing is not None:
        out += [" ".join(missing_sentences(d.missing)), ""]
    out += [f"**Note:** {d.note or '(none recorded)'}", ""]
    return out


def render_markdown(report: ReportContent) -> str:
    """The whole report as Markdown text."""
    out = ["# Predictor form decisions", "", report.intro, "", "## Data", ""]
    out += _table(["item", "value"], [[k, v] for k, v in report.fingerprint.items()])
    out += ["", "## Scan summary", ""]
    out += _table(["item", "value"], [[k, v] for k, v in report.summary.items()])
    out += ["", "## Decisions", ""]
    if not report.decisions:
        out += ["No recodings recorded.", ""]
    for d in report.decisions:
        out += _decision(d)
    if report.set_aside:
        out += ["## Set aside", ""]
        out += [f"- {c}: {note or '(no note)'}" for c, note in report.set_aside]
        out.append("")
    out += ["## Output checking", "", report.cell_rule, "", report.derived, ""]
    out += ["## Cautions", ""] + [f"- {c}" for c in report.cautions] + [""]
    out += [report.dated_line, ""]
    return "\n".join(out)


def _note(text: str) -> str:
    """A sentence after the table's legend (nothing when empty)."""
    return f" {text}." if text else ""

"""Number formatting shared by the report renderers, and the evidence in words."""

from __future__ import annotations

from tui.numbers_text import EN_DASH, number_text, p_text, value_text
from tui.recodings.evidence import Evidence


def fmt(value: float | None, digits: int = 2) -> str:
    return number_text(value, digits, dash=EN_DASH)


def fmt_p(value: float | None) -> str:
    return p_text(value, dash=EN_DASH)


def fmt_x(value: float | None) -> str:
    return value_text(value, 4, dash=EN_DASH)


def _shown(evidence: Evidence) -> list[tuple[str, object]]:
    """(name, value) of the evidence a reader needs, in the report's order; groups and
    knots only when the entry recorded them (otherwise they are the documented default,
    not something shown at decision time)."""
    score, row, weights = evidence.score, evidence.row, evidence.weights
    groups = evidence.groups if evidence.holds("groups") else None
    knots = evidence.knots if evidence.holds("knots") else None
    return [
        ("form", row.form),
        ("form df", row.df),
        ("spline score", score.statistic),
        ("score statistic", score.test if score.statistic is not None else None),
        ("score df", score.df),
        ("q-value", fmt_p(score.q_value) if score.q_value is not None else None),
        ("ΔAIC", row.delta_aic),
        ("groups", groups),
        ("knots", knots),
        ("adjusted for", ", ".join(evidence.adjusted_for)),
        ("weight", weights.column),
        ("weight kind", weights.kind),
        ("made with bendwise", evidence.version),
    ]


def evidence_words(evidence: Evidence) -> str:
    """The evidence a decision recorded, the parts a reader needs, rounded."""
    parts = []
    for name, value in _shown(evidence):
        if value is None or value == "":
            continue
        text = f"{value:.2f}" if isinstance(value, float) else str(value)
        parts.append(f"{name} {text}")
    return "; ".join(parts)

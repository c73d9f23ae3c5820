"""Number formatting shared by the report renderers."""

from __future__ import annotations

from tui.numbers_text import EN_DASH, number_text, p_text, value_text


def fmt(value: float | None, digits: int = 2) -> str:
    return number_text(value, digits, dash=EN_DASH)


def fmt_p(value: float | None) -> str:
    return p_text(value, dash=EN_DASH)


def fmt_x(value: float | None) -> str:
    return value_text(value, 4, dash=EN_DASH)


EVIDENCE_SHOWN = (
    ("form", "form"),
    ("score", "spline score"),
    ("score_df", "df"),
    ("q_value", "q-value"),
    ("delta_aic", "ΔAIC"),
    ("groups", "groups"),
    ("knots", "knots"),
    ("adjusted_for", "adjusted for"),
    ("weight", "weight"),
    ("weight_kind", "weight kind"),
)


def evidence_words(evidence: dict) -> str:
    """The evidence a decision recorded, the parts a reader needs, rounded."""
    parts = []
    for key, name in EVIDENCE_SHOWN:
        value = evidence.get(key)
        if value is None or value == [] or value == "":
            continue
        if isinstance(value, float):
            text = fmt_p(value) if key == "q_value" else f"{value:.2f}"
        elif isinstance(value, list | tuple):
            text = ", ".join(str(v) for v in value)
        else:
            text = str(value)
        parts.append(f"{name} {text}")
    return "; ".join(parts)

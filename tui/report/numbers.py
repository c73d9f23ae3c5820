"""Number formatting shared by the report renderers."""

from __future__ import annotations

import math


def fmt(value: float | None, digits: int = 2) -> str:
    if value is None or not math.isfinite(value):
        return "–"
    return f"{value:.{digits}f}"


def fmt_p(value: float | None) -> str:
    if value is None or not math.isfinite(value):
        return "–"
    return "<0.0001" if value < 1e-4 else f"{value:.4f}"


def fmt_x(value: float | None) -> str:
    return "–" if value is None else f"{value:.4g}"


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

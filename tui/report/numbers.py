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

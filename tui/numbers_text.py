"""Numbers as short text, the one home for every surface (command line, screens, report).

Each function shows a dash where there is no number (None, NaN or infinite). The command
line and the screens use a hyphen; the report passes ``dash=EN_DASH`` for its typeset tables.
"""

from __future__ import annotations

import math

HYPHEN = "-"
EN_DASH = "–"
P_FLOOR = 1e-4
"""p- and q-values below this are shown as ``<0.0001`` (four decimals cannot tell them apart)."""


def is_number(value: float | None) -> bool:
    """A finite number (None and NaN are shown as a dash)."""
    return value is not None and math.isfinite(value)


def number_text(value: float | None, digits: int = 1, dash: str = HYPHEN) -> str:
    """Fixed decimals, or a dash when there is no number; never ``-0.0`` (a value that
    rounds to zero has no sign)."""
    if not is_number(value):
        return dash
    text = f"{value:.{digits}f}"
    return text[1:] if text.startswith("-") and not text.strip("-0.") else text


def p_text(value: float | None, dash: str = HYPHEN) -> str:
    """A p- or q-value in at most 7 characters: four decimals, or ``<0.0001``."""
    if not is_number(value):
        return dash
    return "<0.0001" if value < P_FLOOR else f"{value:.4f}"  # type: ignore[operator]


def value_text(value: float | None, digits: int = 6, dash: str = HYPHEN) -> str:
    """A data value (cut point, range end, group median) to ``digits`` significant digits."""
    return f"{value:.{digits}g}" if is_number(value) else dash

"""Numbers and names as short text for the screens (display only: no statistics here)."""

from __future__ import annotations

import math


def is_number(value: float | None) -> bool:
    """A finite number (None and NaN are shown as a dash)."""
    return value is not None and math.isfinite(value)


def number_text(value: float | None, digits: int = 1) -> str:
    """Fixed decimals, or a dash when there is no number."""
    return f"{value:.{digits}f}" if is_number(value) else "-"


def p_text(value: float | None) -> str:
    """A p- or q-value in at most 7 characters."""
    if not is_number(value):
        return "-"
    return "<0.0001" if value < 1e-4 else f"{value:.4f}"


def value_text(value: float | None) -> str:
    """A data value (cut point, range end) to six significant digits."""
    return f"{value:.6g}" if is_number(value) else "-"


def path_text(path_name: str, cwd: str) -> str:
    """A path shown relative to the working folder when it lies inside it."""
    prefix = cwd.rstrip("/") + "/"
    return path_name[len(prefix) :] if path_name.startswith(prefix) else path_name

"""The small-cell rule for outputs that leave a secure environment."""

from __future__ import annotations

DEFAULT_MIN_CELL = 10


def cell(count: float, min_cell: int) -> str:
    """A count as text, or ``<N`` when it is below the threshold."""
    value = int(round(count))
    return f"<{min_cell}" if value < min_cell else str(value)


def group_is_safe(n: float, events: float, min_cell: int) -> bool:
    """Rows, events and non-events all reach the threshold (else the rates are withheld too,
    since a rate and a group size give the events back)."""
    return min(n, events, n - events) >= min_cell

"""The text lines above the column screen's plot, from what they show (no widgets here)."""

from __future__ import annotations

from collections.abc import Sequence

from tui.app.text import number_text, p_text, value_text
from tui.engine.column_fits import TAIL_SHARE
from tui.engine.scan import ColumnScan
from tui.intake.profile import ColumnProfile

TAIL_PERCENT = round(TAIL_SHARE * 100)
"""The tails are shown as the TAIL_PERCENT-th and (100 - TAIL_PERCENT)-th percentiles."""


def heading_line(column: str, order: Sequence[str], decided: str) -> str:
    """``<column> · <i> of <n> · <decision>``, the place taken in ``order``."""
    where = f"{order.index(column) + 1} of {len(order)}" if column in order else ""
    return f"{column} · {where} · {decided}"


def score_line(
    scan: ColumnScan | None, scan_finished: bool, tails: tuple[float, float] | None
) -> str:
    """The column's score (q and shape once the scan ends) and its tail percentiles."""
    parts = []
    if scan is not None and scan.score is not None:
        score = f"score {number_text(scan.score)} on {scan.df} df"
        if scan_finished:
            shape = (scan.shape or "-") if scan.forms_fitted else "shape with the forms"
            parts.append(f"{score} · q {p_text(scan.q_value)} · {shape}")
        else:
            parts.append(f"{score} · q and shape when the scan ends")
    elif scan is not None:
        parts.append(f"not scored ({', '.join(scan.flags) or 'see flags'})")
    if tails is not None:
        # Percentiles, not shares of rows: a lumpy column can hold far more than 5%
        # of its rows at the 5th percentile.
        low, high = (value_text(v) for v in tails)
        parts.append(f"p{TAIL_PERCENT} {low} · p{100 - TAIL_PERCENT} {high}")
    return " · ".join(parts)


def counts_line(profile: ColumnProfile, scan: ColumnScan | None) -> str:
    """Values present, missing and distinct, and the scan's flags in words."""
    flags = "when the scan reaches it"
    if scan is not None:
        flags = ", ".join(scan.flags) or "none"
    return (
        f"n {profile.n} · missing {profile.missing} · distinct {profile.distinct} · flags {flags}"
    )


def settings_line(groups: int, knots: int) -> str:
    """The setting keys and their values now (the footer has no room for them)."""
    return (
        f"g {groups} groups · s {knots} knots · c typed cut point · h typed hinge knot · ! cautions"
    )

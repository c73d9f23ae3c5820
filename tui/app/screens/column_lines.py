"""The text lines above the column screen's plot, from what they show (no widgets here)."""

from __future__ import annotations

from collections.abc import Sequence

from tui.app.fit_cache import ColumnFits
from tui.app.text import number_text, p_text, value_text
from tui.app.widgets.forms_table import form_text
from tui.engine.column_fits import TAIL_SHARE
from tui.engine.compare import FormFit
from tui.engine.forms.spline import KNOT_PERCENTILES
from tui.engine.plot_window import PlotWindow
from tui.engine.robust_wald import LR
from tui.engine.scan import ColumnScan
from tui.intake.profile import ColumnProfile

KNOT_CHOICES = tuple(sorted(KNOT_PERCENTILES))
GROUPS_TIP = "Next number of quantile groups (4, 5, 10, 20)"
KNOTS_TIP = "Next number of spline knots (3 to 7)"
CUT_TIP = "Type a cut point for an indicator"
HINGE_TIP = "Type the knot of a hinge"
RECODED_TIP = (
    "Plot the group logits against the highlighted form's fitted linear predictor "
    "(on the line when the form fits); again: back to the curves"
)
TABLE_TIP = "Give the plot the room of the candidate table, or the table back"
SHORT_BELOW = 32
"""Screens with fewer rows show fewer candidate rows at once (the table scrolls)."""


def next_choice(choices: tuple[int, ...], current: int) -> int:
    """The next choice after ``current`` (wrapping); from a value not offered, the next
    larger one."""
    later = [c for c in choices if c > current]
    return later[0] if later else choices[0]


def legend_line(
    fits: ColumnFits | None, row: FormFit | None, window: PlotWindow | None, recoded: bool
) -> str:
    """Every mark the plot draws, in words."""
    adjusted = fits is not None and fits.counts.covariates is not None
    # The group logits are the column's own: the covariates are in the fits only.
    groups = f"● group logit{' (unadjusted)' if adjusted else ''}  │ ±1.96 SE"
    if recoded:
        form = form_text(row) if row is not None else "no form"
        return f"recoded ({form}): {groups} at its linear predictor  · · y = x"
    legend = f"{groups}  + LOWESS  · · linear"
    if row is not None and row.kind != "linear" and row.fit is not None:
        legend += f"  ⠤⠤ {form_text(row)}"
    if window is not None and (window.beyond_low or window.beyond_high):
        legend += "  ◂ ▸ values beyond"
    return legend


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
        score = f"score {number_text(scan.score)} on {scan.df} df ({scan.statistic or LR})"
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
        f"g {groups} groups · s {knots} knots · c cut · h hinge · b side · v view · t table"
        " · z undo"
    )

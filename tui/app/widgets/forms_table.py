"""The candidate forms of one column, as the engine compared them."""

from __future__ import annotations

from collections.abc import Sequence

from tui.app.fit_cache import ColumnFits
from tui.app.text import is_number, number_text, p_text
from tui.app.widgets.key_table import ColumnSpec, KeyTable, Row
from tui.engine.compare import BoxTidwell, FormFit
from tui.engine.forms.base import Recoding
from tui.engine.stability import SelectionShares, percent
from tui.table_rules import names_best

BY_HAND = "entered by hand (no df for a search)"
SEARCH_DF = "df includes {n} for the search"
"""Beside a searched row: the df rule (``tui.table_rules.DF_RULE``) on screen."""
ACCEPTED_MARK = "✓"
BEST_WORD = "best"
"""Beside the AIC of the row with the lowest AIC (a word, not a colour)."""


def lowest_aic(rows: Sequence[FormFit]) -> str | None:
    """The key of the first row with the lowest AIC, when it beats linear by the margin
    of ``table_rules.BEST_MARGIN`` (None otherwise: linear is adequate)."""
    scored = [r for r in rows if is_number(r.aic)]
    best = min(scored, key=lambda r: r.aic) if scored else None
    return best.key if best is not None and names_best(best.delta_aic) else None


def power_words(bt: BoxTidwell) -> str:
    """The Box–Tidwell power with its 95% interval, flagged when it is not meaningful."""
    text = f"Box–Tidwell power {number_text(bt.power, 2)}"
    text += (
        f" (95% CI {number_text(bt.low, 2)} to {number_text(bt.high, 2)}), p {p_text(bt.p_value)}"
    )
    why = bt.why_not()
    return text if why is None else f"{text}: not meaningful ({why})"


def row_notes(row: FormFit, by_hand: bool) -> list[str]:
    """The engine's notes on a row, after its fit status when that is not ``ok``."""
    notes = list(row.notes)
    searched = row.df - len(row.recoding.suffixes()) if row.recoding is not None else 0
    if searched > 0:
        notes.append(SEARCH_DF.format(n=searched))
    if row.status != "ok":
        notes.insert(0, row.status if row.status != "failed" else "could not be fitted")
    if by_hand:
        notes.insert(0, BY_HAND)
    return notes


def form_text(row: FormFit) -> str:
    """The learned form in words (the candidate's label when nothing was learned)."""
    return row.recoding.describe() if row.recoding is not None else row.label


def form_row(
    row: FormFit,
    accepted: Recoding | None,
    by_hand: bool,
    best: bool = False,
    shares: SelectionShares | None = None,
) -> Row:
    """A table row for one candidate, keyed by its form key; ``best``: lowest AIC by the
    margin; ``shares``: the bootstrap selection shares (a dash until they are in)."""
    mark = ACCEPTED_MARK if accepted is not None and row.recoding == accepted else " "
    return row.key, {
        "form": f"{mark} {form_text(row)}",
        "df": str(row.df) if row.recoding is not None else "-",
        "deviance": number_text(row.deviance),
        "aic": number_text(row.aic),
        "best": BEST_WORD if best else "",
        "delta_aic": number_text(row.delta_aic),
        "lr_p": p_text(row.lr_p),
        "share": percent(shares.share(row.key)) if shares is not None else "-",
        "notes": "; ".join(row_notes(row, by_hand)) or "-",
    }


class FormsTable(KeyTable):
    """One row per candidate form; the row key is the candidate's key (``FormFit.key``)."""

    SPECS = (
        ColumnSpec("form", "form", 20, 30, False, 0),
        ColumnSpec("df", "df", 2, 2, True, 1),
        ColumnSpec("deviance", "deviance", 8, 9, True, 2),
        ColumnSpec("aic", "AIC", 8, 9, True, 3),
        ColumnSpec("best", "", 4, 4, False, 3),
        ColumnSpec("delta_aic", "ΔAIC", 6, 7, True, 4),
        ColumnSpec("lr_p", "LR p", 7, 7, True, 5),
        ColumnSpec("share", "share", 5, 5, True, 5),
        ColumnSpec("notes", "notes", 10, 90, False, 6),
    )

    def show(
        self,
        fits: ColumnFits,
        accepted: Recoding | None,
        shares: SelectionShares | None = None,
    ) -> None:
        """Show the candidates of ``fits``, marking the accepted one."""
        hand = fits.request.hand_labels()
        rows = fits.table.rows if fits.table is not None else ()
        best = lowest_aic(rows)
        self.show_rows(
            [form_row(r, accepted, r.label in hand, r.key == best, shares) for r in rows]
        )

"""The list of scanned columns: one row each, as many fields as the width allows."""

from __future__ import annotations

from collections.abc import Sequence

from textual.binding import Binding

from tui.app.session import KEPT_LINEAR, SET_ASIDE, UNDECIDED, ReviewSession
from tui.app.text import number_text, p_text
from tui.app.widgets.key_table import ColumnSpec, KeyTable, Row
from tui.engine.scan import ColumnScan

PENDING = "…"
"""Shown for q-values and shape hints until every column is scanned."""

DECISION_MARKS = {UNDECIDED: " ", KEPT_LINEAR: "=", SET_ASIDE: "×"}
"""Mark before a column name; any accepted form is ✓."""
FLAG_MARK = "!"


def decision_mark(word: str) -> str:
    """One character standing for the decision (explained on the help screen)."""
    return DECISION_MARKS.get(word, "✓")


def scan_row(scan: ColumnScan, session: ReviewSession) -> Row:
    """A table row for one scanned column, keyed by its name."""
    word = session.decision_word(scan.column)
    final = session.scan_finished
    mark = decision_mark(word) + (FLAG_MARK if scan.flags else " ")
    return scan.column, {
        "name": f"{mark} {scan.column}",
        "n": str(scan.n),
        "missing": str(scan.missing),
        "distinct": str(scan.distinct),
        "score": number_text(scan.score),
        "q": p_text(scan.q_value) if final else PENDING,
        "shape": (scan.shape or "-") if final else (PENDING if scan.score is not None else "-"),
        "best": scan.best_form or "-",
        "delta_aic": number_text(scan.delta_aic),
        "flags": ", ".join(scan.flags) or "-",
        "decision": word,
    }


class TriageTable(KeyTable):
    """Scanned columns in the order given; Enter opens the highlighted one."""

    BINDINGS = [Binding("enter", "select_cursor", "Open")]

    SPECS = (
        ColumnSpec("name", "column", 22, 32, False, 0),
        ColumnSpec("n", "n", 6, 7, True, 10),
        ColumnSpec("missing", "missing", 7, 7, True, 8),
        ColumnSpec("distinct", "distinct", 8, 8, True, 9),
        ColumnSpec("score", "score", 6, 6, True, 1),
        ColumnSpec("q", "q-value", 7, 7, True, 2),
        ColumnSpec("shape", "shape", 14, 14, False, 3),
        ColumnSpec("best", "best form", 16, 26, False, 4),
        ColumnSpec("delta_aic", "ΔAIC", 6, 7, True, 5),
        ColumnSpec("flags", "flags", 12, 28, False, 6),
        ColumnSpec("decision", "decision", 12, 24, False, 7),
    )

    def show(self, scans: Sequence[ColumnScan], session: ReviewSession) -> None:
        """Show these scanned columns."""
        self.show_rows([scan_row(s, session) for s in scans])

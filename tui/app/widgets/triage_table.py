"""The list of scanned columns: one row each, as many fields as the width allows."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from textual.binding import Binding

from tui.app.text import number_text, p_text
from tui.app.widgets.key_table import ColumnSpec, KeyTable, Row
from tui.engine.scan import ColumnScan
from tui.recodings.decisions import KEPT_LINEAR, SET_ASIDE, UNDECIDED
from tui.table_rules import best_words

PENDING = "…"
"""Shown for q-values until every column is scored, and for shape hints, best forms and
ΔAIC until the column's forms are fitted."""

DECISION_MARKS = {UNDECIDED: " ", KEPT_LINEAR: "=", SET_ASIDE: "×"}
"""Mark before a column name; any accepted form is ✓."""
FLAG_MARK = "!"
UNADJUSTED = "-"
"""The adjustment field of a score fitted one column at a time."""
ADJUSTMENT_KEYS = ("adj", "adjusted")
"""Fields shown only once some score is adjusted."""


def adjustment_mark(scan: ColumnScan) -> str:
    """``-`` for an unadjusted score, ``+N`` for one adjusted for N columns."""
    return f"+{len(scan.adjusted_for)}" if scan.adjusted_for else UNADJUSTED


def decision_mark(word: str) -> str:
    """One character standing for the decision (explained on the help screen)."""
    return DECISION_MARKS.get(word, "✓")


def scan_row(scan: ColumnScan, word: str, final: bool) -> Row:
    """A table row for one scanned column, keyed by its name: ``word`` is its decision,
    ``final`` says every score is in (q-values known; a shape once the column's forms are,
    in the second pass)."""
    mark = decision_mark(word) + (FLAG_MARK if scan.flags else " ")
    shown = final and scan.forms_fitted  # a threshold is known only once the forms are
    return scan.column, {
        "name": f"{mark} {scan.column}",
        "n": str(scan.n),
        "missing": str(scan.missing),
        "distinct": str(scan.distinct),
        "score": number_text(scan.score),
        "adj": adjustment_mark(scan),
        "adjusted": ", ".join(scan.adjusted_for) or UNADJUSTED,
        "q": p_text(scan.q_value) if final else PENDING,
        "shape": (scan.shape or "-") if shown else (PENDING if scan.score is not None else "-"),
        "best": best_words(scan.best_form, scan.delta_aic) if scan.forms_fitted else PENDING,
        "delta_aic": number_text(scan.delta_aic) if scan.forms_fitted else PENDING,
        "flags": ", ".join(scan.flags) or "-",
        "decision": word,
    }


class TriageTable(KeyTable):
    """Scanned columns in the order given; Enter opens the highlighted one."""

    BINDINGS = [Binding("enter", "select_cursor", "Open")]
    steady_columns = True

    SPECS = (
        ColumnSpec("name", "column", 22, 32, False, 0),
        ColumnSpec("n", "n", 6, 7, True, 12),
        ColumnSpec("missing", "missing", 7, 7, True, 10),
        ColumnSpec("distinct", "distinct", 8, 8, True, 11),
        ColumnSpec("score", "score", 6, 6, True, 1),
        ColumnSpec("adj", "adj", 3, 3, True, 2),
        ColumnSpec("q", "q-value", 7, 7, True, 3),
        ColumnSpec("shape", "shape", 14, 14, False, 4),
        ColumnSpec("best", "best form", 16, 26, False, 5),
        ColumnSpec("delta_aic", "ΔAIC", 6, 7, True, 6),
        ColumnSpec("flags", "flags", 12, 28, False, 7),
        ColumnSpec("decision", "decision", 12, 24, False, 13),  # the name's mark says it too
        ColumnSpec("adjusted", "adjusted for", 16, 60, False, 9),
    )

    @classmethod
    def gives_way(cls) -> str:
        """The order in which fields leave a narrow list, in words (for the help screen)."""
        order = sorted(cls.SPECS[1:], key=lambda s: -s.priority)
        return ", ".join(s.header for s in order)

    def __init__(self, *, id: str | None = None) -> None:  # noqa: A002 (Textual's name)
        super().__init__(id=id)
        self._made: dict[str, tuple[ColumnScan, str, bool, Row]] = {}

    adjusted_shown = False
    """Some score of the session is adjusted: the adjustment fields are shown."""

    def specs(self) -> tuple[ColumnSpec, ...]:
        if self.adjusted_shown:
            return self.SPECS
        return tuple(s for s in self.SPECS if s.key not in ADJUSTMENT_KEYS)

    def show(
        self,
        scans: Sequence[ColumnScan],
        words: Mapping[str, str],
        final: bool,
        adjusted: bool,
    ) -> None:
        """Show these scanned columns: ``words`` maps each column to its decision, ``final``
        says the scan has ended; ``adjusted`` (some score of the review is adjusted) shows
        the adjustment fields, so filtering never moves the columns."""
        self.adjusted_shown = adjusted
        self.show_rows([self._row(s, words.get(s.column, UNDECIDED), final) for s in scans])

    def _row(self, scan: ColumnScan, word: str, final: bool) -> Row:
        """``scan_row``, kept while the column's result, decision and ``final`` are the
        same (a sort or a filter redraws thousands of rows whose text has not changed)."""
        kept = self._made.get(scan.column)
        if kept is not None and kept[0] is scan and kept[1:3] == (word, final):
            return kept[3]
        row = scan_row(scan, word, final)
        self._made[scan.column] = (scan, word, final, row)
        return row

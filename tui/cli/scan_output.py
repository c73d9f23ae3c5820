"""Render ranked scan results as a text table, CSV or JSON."""

from __future__ import annotations

import csv
import io
import json
import textwrap
from collections.abc import Sequence

from tui.cautions import SHORT_CAUTION
from tui.engine.flags import NOT_NUMERIC
from tui.engine.robust_wald import LR
from tui.engine.scan import ColumnScan
from tui.engine.score_words import STATISTIC_LINE
from tui.numbers_text import number_text, p_text
from tui.table_rules import BEST_RULE, best_words

FIELDS = (
    "column",
    "n",
    "missing",
    "events",
    "distinct",
    "score",
    "df",
    "score_test",
    "statistic",
    "p_value",
    "q_value",
    "shape",
    "best_form",
    "delta_aic",
    "flags",
    "adjusted_for",
    "weight",
    "weight_kind",
    "weighted_n",
    "weighted_events",
)


def as_json(scans: Sequence[ColumnScan]) -> str:
    return json.dumps([s.as_record() for s in scans], indent=2) + "\n"


def as_csv(scans: Sequence[ColumnScan]) -> str:
    out = io.StringIO()
    writer = csv.DictWriter(out, fieldnames=FIELDS, lineterminator="\n")
    writer.writeheader()
    for s in scans:
        record = s.as_record()
        record["flags"] = ";".join(s.flags)
        record["adjusted_for"] = ";".join(s.adjusted_for)
        writer.writerow({k: "" if v is None else v for k, v in record.items()})
    return out.getvalue()


ELIDED_FIRST = ("p", "df", "test", "distinct", "miss", "n", "#", "shape", "ΔAIC", "flags")
"""Fields a narrow terminal drops, first to last; column, score, q and best form stay."""
ELIDE_HELP = (
    "On a terminal the table fits its width, dropping fields in this order: "
    + ", ".join(ELIDED_FIRST)
    + " (column, score, q and best form stay). --format csv|json, --output and a pipe "
    "give every field."
)


def _rows(s: ColumnScan) -> str:
    """Rows used, and beside them the sum of their weights when weighted."""
    return str(s.n) if s.weighted_n is None else f"{s.n} (w {s.weighted_n:.1f})"


def as_table(scans: Sequence[ColumnScan], adjustment: str = "", width: int | None = None) -> str:
    """A fixed-width table, most non-linear first; non-numeric columns are rows of their own
    (flag ``not-numeric``), listed once like every other column. ``width``: the terminal's
    columns (fields in ``ELIDED_FIRST`` order give way until the table fits); None: all."""
    header = ("#", "column", "n", "miss", "distinct", "score", "df", "test", "p", "q", "shape",
              "best form", "ΔAIC", "flags")  # fmt: skip
    # Survey weights: the statistic beside each score (robust Wald, or LR where none applies).
    statistics = {s.statistic for s in scans if s.statistic is not None}
    labelled = bool(statistics - {LR})
    if labelled:
        header = (*header[:8], "statistic", *header[8:])
    rows = [header]
    for i, s in enumerate(scans, 1):
        stat = (s.statistic or "-",) if labelled else ()
        rows.append(
            (
                str(i),
                s.column,
                _rows(s),
                str(s.missing),
                str(s.distinct),
                number_text(s.score),
                "-" if s.df is None else str(s.df),
                s.score_test or "-",
                *stat,
                p_text(s.p_value),
                p_text(s.q_value),
                s.shape or "-",
                best_words(s.best_form, s.delta_aic),
                number_text(s.delta_aic),
                ",".join(s.flags) or "-",
            )
        )
    widths = [max(len(r[j]) for r in rows) for j in range(len(header))]
    right = {"#", "n", "miss", "distinct", "score", "df", "p", "q", "ΔAIC"}
    kept = list(range(len(header)))
    for name in ELIDED_FIRST:
        if width is None or sum(widths[j] + 2 for j in kept) - 2 <= width:
            break
        kept.remove(header.index(name))
    lines = []
    for r in rows:
        cells = [
            r[j].rjust(widths[j]) if header[j] in right else r[j].ljust(widths[j]) for j in kept
        ]
        lines.append("  ".join(cells).rstrip())
    lines.insert(1, "  ".join("-" * widths[j] for j in kept))
    scored = sum(1 for s in scans if s.score is not None)
    numeric = sum(1 for s in scans if NOT_NUMERIC not in s.flags)
    lines.append("")
    lines.append(f"{numeric} numeric columns, {scored} scored: {STATISTIC_LINE[labelled]}")
    kinds = sorted({s.weight_kind for s in scans if s.weighted_n is not None})
    if kinds:
        lines.append(
            f"n counts rows; (w ...) beside it sums their {' and '.join(kinds)} weights"
            + (" (average 1 over each column's rows)." if "survey" in kinds else ".")
        )
    lines.append(BEST_RULE + ".")
    if adjustment:
        lines.append(f"Every fit {adjustment} (a column is never adjusted for itself).")
    lines.append(f"Caution: {SHORT_CAUTION}")
    if width is not None:  # the prose lines wrap at the terminal's width as well
        table, prose = lines[: len(rows) + 1], lines[len(rows) + 1 :]
        wrapped = [part for line in prose for part in (textwrap.wrap(line, width) or [""])]
        lines = table + wrapped
    return "\n".join(lines) + "\n"

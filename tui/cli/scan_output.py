"""Render ranked scan results as a text table, CSV or JSON."""

from __future__ import annotations

import csv
import io
import json
from collections.abc import Sequence

from tui.cautions import SHORT_CAUTION
from tui.engine.flags import NOT_NUMERIC
from tui.engine.scan import ColumnScan
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
    "p_value",
    "q_value",
    "shape",
    "best_form",
    "delta_aic",
    "flags",
    "adjusted_for",
    "weight",
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


def as_table(scans: Sequence[ColumnScan], adjustment: str = "") -> str:
    """A fixed-width table, most non-linear first; non-numeric columns are rows of their own
    (flag ``not-numeric``), listed once like every other column."""
    header = ("#", "column", "n", "miss", "distinct", "score", "df", "p", "q", "shape",
              "best form", "ΔAIC", "flags")  # fmt: skip
    rows = [header]
    for i, s in enumerate(scans, 1):
        rows.append(
            (
                str(i),
                s.column,
                str(s.n),
                str(s.missing),
                str(s.distinct),
                number_text(s.score),
                "-" if s.df is None else str(s.df),
                p_text(s.p_value),
                p_text(s.q_value),
                s.shape or "-",
                best_words(s.best_form, s.delta_aic),
                number_text(s.delta_aic),
                ",".join(s.flags) or "-",
            )
        )
    widths = [max(len(r[j]) for r in rows) for j in range(len(header))]
    right = {0, 2, 3, 4, 5, 6, 7, 8, 11}
    lines = []
    for r in rows:
        cells = [
            c.rjust(w) if j in right else c.ljust(w)
            for j, (c, w) in enumerate(zip(r, widths, strict=True))
        ]
        lines.append("  ".join(cells).rstrip())
    lines.insert(1, "  ".join("-" * w for w in widths))
    scored = sum(1 for s in scans if s.score is not None)
    numeric = sum(1 for s in scans if NOT_NUMERIC not in s.flags)
    lines.append("")
    lines.append(
        f"{numeric} numeric columns, {scored} scored: score = likelihood-ratio chi-square "
        "of a restricted cubic spline against linear; q = Benjamini-Hochberg."
    )
    lines.append(BEST_RULE + ".")
    if adjustment:
        lines.append(f"Every fit {adjustment} (a column is never adjusted for itself).")
    lines.append(f"Caution: {SHORT_CAUTION}")
    return "\n".join(lines) + "\n"

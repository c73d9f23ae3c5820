"""``bendwise check`` as a text table or JSON."""

from __future__ import annotations

import json
from collections.abc import Sequence

from tui.cautions import SHORT_CAUTION
from tui.numbers_text import number_text, p_text
from tui.recodings.check import DRIFT, RULE, ColumnCheck
from tui.table_rules import DF_RULE, LR_DASH

HEAD = (
    "column",
    "form",
    "rows",
    "events",
    "missing",
    "outside",
    "PSI",
    "ΔAIC",
    "LR chi2",
    "df",
    "LR p",
    "verdict",
)


def as_json(checks: Sequence[ColumnCheck]) -> str:
    return json.dumps([c.as_record() for c in checks], indent=2) + "\n"


def _share(value: float | None) -> str:
    return "-" if value is None else f"{100 * value:.1f}%"


def _verdict(check: ColumnCheck) -> str:
    words = [check.verdict] if check.verdict else []
    if check.drift:
        words.append(DRIFT)
    return " + ".join(words) or "-"


def as_table(checks: Sequence[ColumnCheck], data_name: str) -> str:
    rows = [
        [
            c.column,
            c.form,
            str(c.rows),
            str(c.events),
            "-" if c.missing is None else str(c.missing),
            _share(c.outside_range),
            number_text(c.psi, 3),
            number_text(c.delta_aic),
            number_text(c.lr_chi2),
            "-" if c.lr_df is None else str(c.lr_df),
            p_text(c.lr_p),
            _verdict(c),
        ]
        for c in checks
    ]
    widths = [
        max(len(h), *(len(r[i]) for r in rows)) if rows else len(h) for i, h in enumerate(HEAD)
    ]
    left = {0, 1, len(HEAD) - 1}
    out = [f"the log's choices checked on {data_name}"]
    for row in [list(HEAD), *rows]:
        cells = [
            c.ljust(w) if i in left else c.rjust(w)
            for i, (c, w) in enumerate(zip(row, widths, strict=True))
        ]
        out.append("  ".join(cells).rstrip())
    out += [
        RULE,
        "outside: share of present values beyond the training range; PSI '-': the log "
        "keeps no training deciles for the column",
        LR_DASH,
        DF_RULE,
        SHORT_CAUTION,
    ]
    return "\n".join(out) + "\n"

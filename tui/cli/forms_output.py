"""``bendwise forms`` as a text table, with the rules that read it."""

from __future__ import annotations

from tui.cautions import SHORT_CAUTION
from tui.engine.forms_listing import FormsListing
from tui.engine.stability import METHOD, percent
from tui.numbers_text import number_text, p_text
from tui.table_rules import ADEQUATE, BEST_RULE, DF_RULE, LR_DASH, names_best


def as_table(column: str, listing: FormsListing) -> str:
    """The candidate table of ``column``, one line per form, then its legend."""
    records = listing.records()
    shares = listing.shares
    head = ["form", "df", "deviance", "AIC", "ΔAIC", "LR p"] + (["share"] if shares else [])
    rows = []
    for r in records:
        line = [
            r["form"],
            "-" if r["df"] is None else str(r["df"]),
            number_text(r["deviance"]),
            number_text(r["aic"]),
            number_text(r["delta_aic"]),
            p_text(r["lr_p"]),
        ]
        if shares:
            line.append(percent(r["share"]))
        rows.append(line + ["; ".join(([r["status"]] if r["status"] != "ok" else []) + r["notes"])])
    head.append("notes")
    widths = [max(len(h), *(len(row[i]) for row in rows)) for i, h in enumerate(head)]
    out = [f"candidate forms of {column}"]
    for row in [head, *rows]:
        cells = [
            c.ljust(w) if i in (0, len(head) - 1) else c.rjust(w)
            for i, (c, w) in enumerate(zip(row, widths, strict=True))
        ]
        out.append("  ".join(cells).rstrip())
    table = listing.fitted.table
    best = table.best() if table is not None else None
    if best is not None and best.key != "linear" and names_best(best.delta_aic):
        out.append(f"best: {listing.labels()[best.key]} (ΔAIC {number_text(best.delta_aic)})")
    else:
        out.append(f"best: {ADEQUATE}")
    if shares is not None:
        out.append(
            f"bootstrap shares ({METHOD}): {shares.leaders(listing.labels())}, seed {shares.seed}"
        )
    out += [BEST_RULE, LR_DASH, DF_RULE, SHORT_CAUTION]
    return "\n".join(out) + "\n"

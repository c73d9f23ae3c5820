"""What a report says about a decided column's missing values: the missing rows as a group
(under the small-cell rule), how the log codes them, and fill against fill + indicator on
every row with an outcome. The renderers share the sentences."""

from __future__ import annotations

from dataclasses import dataclass

from tui.cautions import MISSING_CAUTION
from tui.engine.missing_group import compare_fills, missing_group, training_median
from tui.engine.reduced_data import ReducedData
from tui.intake.dataset import ColumnarDataset, Dataset
from tui.recodings.model import Decision
from tui.report.cells import cell, group_is_safe
from tui.report.numbers import fmt, fmt_x


@dataclass(frozen=True)
class MissingPart:
    """The missing rows of one decided column, numbers already through the small-cell rule."""

    rows: str
    rate: float | None
    logit: float | None
    se: float | None
    all_rows: str
    complete_rows: str
    coded: str
    fill: float
    fill_aic: float | None
    indicator_aic: float | None


def missing_part(
    data: Dataset | ColumnarDataset | ReducedData, decision: Decision, min_cell: int
) -> MissingPart | None:
    """None when the column has no missing values among the rows with an outcome."""
    column = decision.column
    if isinstance(data, ReducedData):  # from the engine's counts
        group = data.missing_group(column)
    else:
        x, y = data.raw_values(column), data.outcome.y
        group = missing_group(x, y)
    if group is None:
        return None
    safe = group_is_safe(group.n, group.events, min_cell)
    rule = decision.recoding.missing
    if rule is not None:
        fill = rule.fill
    else:
        fill = data.median(column) if isinstance(data, ReducedData) else training_median(x)
    if rule is None:
        coded = "left missing (no outputs for those rows)"
    elif rule.indicator:
        coded = f"filled with {fmt_x(fill)}, flagged by `{decision.missing_indicator}`"
    else:
        coded = f"filled with {fmt_x(fill)}"
    comparison = (
        data.fill_comparison(column, decision.recoding, fill)
        if isinstance(data, ReducedData)
        else compare_fills(decision.recoding, x, y, fill)
    )
    assert comparison is not None  # a group exists
    ok = [
        f.aic if f.status == "ok" else None
        for f in (comparison.fill_only, comparison.with_indicator)
    ]
    return MissingPart(
        rows=cell(group.n, min_cell),
        rate=group.proportion if safe else None,
        logit=group.logit if safe else None,
        se=group.se if safe else None,
        all_rows=cell(group.rows, min_cell),
        complete_rows=cell(group.observed, min_cell),
        coded=coded,
        fill=float(fill),
        fill_aic=ok[0],
        indicator_aic=ok[1],
    )


def missing_sentences(part: MissingPart) -> list[str]:
    """Plain sentences (Markdown code marks only) for either renderer."""
    if part.logit is None:
        group = f"Missing x: {part.rows} rows; rate and empirical logit withheld (small cell)."
    else:
        whisker = 1.96 * (part.se or 0.0)
        group = (
            f"Missing x: {part.rows} rows, event rate {fmt(part.rate, 3)}, empirical logit "
            f"{fmt(part.logit, 3)} ± {fmt(whisker, 3)} (1.96 SE), shown apart from the groups "
            "above, which hold only rows with x."
        )
    return [
        group,
        f"The log codes a missing x as: {part.coded}.",
        f"The candidate table and groups use the {part.complete_rows} rows with x; the fill "
        f"comparison uses all {part.all_rows} rows with an outcome, missing x as "
        f"{fmt_x(part.fill)}: AIC with the fill {fmt(part.fill_aic)}, with the fill and a missing "
        f"indicator {fmt(part.indicator_aic)}.",
        f"Caution: {MISSING_CAUTION}",
    ]

"""Triage of one column and ranking of many.

The non-linearity score is the likelihood-ratio chi-square of a restricted cubic spline
(default 4 knots) against linear, on k - 2 df (under survey weights the robust Wald
chi-square of its k - 2 non-linear terms, ``robust_wald``); where tied quantiles leave too few knots
(few distinct values), of one indicator per value against linear (``values_test``);
q-values across scored columns follow Benjamini & Hochberg (1995). The column is reduced
to counts once, and every fit uses them.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass, replace

import numpy as np

from tui.engine import flags as F
from tui.engine.adjust import Adjustment
from tui.engine.compare import ComparisonTable, compare_forms
from tui.engine.counts import (
    DEFAULT_MAX_LEVELS,
    ReducedCounts,
    reduce_column,
    rows_with_covariates,
)
from tui.engine.first_fits import SHAPE_ENDS, CurveGrid, first_table, shape_grid
from tui.engine.fittable import one_outcome_class, too_few_values
from tui.engine.forms.registry import triage_candidates
from tui.engine.forms.spline import DEFAULT_KNOTS, SPLINE
from tui.engine.qvalues import bh_qvalues
from tui.engine.robust_wald import LR, LR_APPROXIMATE, WALD_ROBUST, robust_wald
from tui.engine.shape import LINEAR, THRESHOLD, TURNING, curve_shape
from tui.engine.values_test import SPLINE_TEST, VALUES_TEST, values_score
from tui.intake.weights import SURVEY

Q_LINEAR = 0.05
"""Columns whose q-value is at least this are hinted ``linear``."""


@dataclass(frozen=True)
class ScanSettings:
    """Options of a scan."""

    groups: int = 4
    """Quantile groups (and bands)."""
    knots: int = DEFAULT_KNOTS
    """Knots of the scoring spline."""
    max_levels: int = DEFAULT_MAX_LEVELS
    """Distinct values kept exactly before binning."""


@dataclass(frozen=True)
class ColumnScan:
    """The triage result of one column."""

    column: str
    """Column name."""
    rows: int
    """Rows with an outcome."""
    n: int
    """Rows used in the fits (finite value; weight above zero; covariates complete): a count
    of rows, never of weights."""
    missing: int
    """Rows missing or non-finite."""
    events: int
    """Event rows among the n rows (rows, like ``n``; ``weighted_events`` sums weights)."""
    distinct: int
    """Distinct finite values."""
    flags: tuple[str, ...]
    """Warning words (see ``tui.engine.flags``)."""
    score: float | None = None
    """LR chi-square against linear (see ``score_test``); None when not scored."""
    df: int | None = None
    """Degrees of freedom of the score."""
    p_value: float | None = None
    """p-value of the score."""
    q_value: float | None = None
    """Benjamini-Hochberg q-value across scored columns (set by ``rank``)."""
    shape: str | None = None
    """Shape hint, None when not scored."""
    best_form: str | None = None
    """Label of the lowest-AIC candidate."""
    delta_aic: float | None = None
    """AIC of the best candidate minus AIC of linear."""
    minimum: float | None = None
    """Smallest finite value."""
    maximum: float | None = None
    """Largest finite value."""
    exact: bool = True
    """Fits used every distinct value (no binning)."""
    forms_fitted: bool = True
    """The best form and its ΔAIC are known; False for a first-pass result (score only)."""
    adjusted_for: tuple[str, ...] = ()
    """Covariates in every fit of this column (empty: one column at a time)."""
    weight: str | None = None
    """Weight column used in every fit, if any."""
    weight_kind: str | None = None
    """``frequency`` or ``survey`` when weighted."""
    weighted_n: float | None = None
    """Sum of the weights of the n rows (survey weights average 1 over them); None unweighted."""
    weighted_events: float | None = None
    """Sum of the weights of the event rows; None unweighted."""
    score_test: str | None = None
    """Which test gave the score: ``spline`` (spline against linear) or ``values`` (one
    indicator per distinct value against linear, for few-value columns); None unscored."""
    statistic: str | None = None
    """What the score is: ``LR``, ``Wald (robust)`` (survey weights: sandwich covariance)
    or ``LR (approximate)`` (survey weights, no Wald test applies); None unscored."""

    def as_record(self) -> dict[str, object]:
        """Plain values for JSON/CSV output."""

        def num(v: float | None) -> float | None:
            return None if v is None or not math.isfinite(v) else float(v)

        return {
            "column": self.column,
            "n": self.n,
            "missing": self.missing,
            "events": self.events,
            "distinct": self.distinct,
            "score": num(self.score),
            "df": self.df,
            "score_test": self.score_test,
            "statistic": self.statistic,
            "p_value": num(self.p_value),
            "q_value": num(self.q_value),
            "shape": self.shape,
            "best_form": self.best_form,
            "delta_aic": num(self.delta_aic),
            "flags": list(self.flags),
            "adjusted_for": list(self.adjusted_for),
            "weight": self.weight,
            "weight_kind": self.weight_kind,
            "weighted_n": num(self.weighted_n),
            "weighted_events": num(self.weighted_events),
        }


def _shape_hint(
    table: ComparisonTable,
    counts: ReducedCounts,
    forms: bool = True,
    curve: CurveGrid | None = None,
) -> str:
    """The spline's shape; a step that a smooth spline blurs shows as a winning cut point
    (known only once the forms are fitted). ``curve``: the grid and the spline's outputs
    on it, when formed already (``first_table``)."""
    spline = table.row(SPLINE.key)
    if spline is None or spline.fit is None:
        return LINEAR
    if curve is not None and spline.recoding is not None:
        shape = curve_shape(curve.grid, curve.log_odds(spline))
    else:
        lo, hi = counts.quantile(list(SHAPE_ENDS))
        grid = shape_grid(lo, hi)
        shape = curve_shape(grid, spline.log_odds(grid))
    best = table.best()
    if shape in TURNING or not forms or best is None or best.fit is None:
        return shape
    return THRESHOLD if best.form.shows_threshold(best.form_coef) else shape


def scan_counts(
    column: str,
    counts: ReducedCounts,
    rows: int,
    nonfinite: int,
    integer_valued: bool,
    settings: ScanSettings = ScanSettings(),
    present: int | None = None,
    forms: bool = True,
) -> tuple[ColumnScan, ComparisonTable | None]:
    """Score one column from its reduced counts (q-value left for ``rank``).

    ``present`` is the number of rows used (defaults to the counts' total, which is the sum
    of the weights in a weighted check). Without ``forms`` only linear and the spline are
    fitted (the first pass of a two-pass scan): score, p-value, flags and shape hint are
    those of the full scan, except that a step shows as a threshold only once the forms
    are fitted; best form and ΔAIC are left out.
    """
    total_rows, total_events = counts.rows, counts.total_events  # each a sum: taken once
    n = int(round(total_rows)) if present is None else present
    # Profile figures of the column itself: a binned column holds fewer x positions than
    # it has values, and its first and last bin means lie inside its range.
    distinct = counts.distinct_values
    minimum = counts.minimum
    maximum = counts.maximum
    flags = F.profile_flags(rows, n, distinct, nonfinite, integer_valued, minimum)
    # Each result is built once from these (``replace`` costs as much as a fit's setup).
    profile = {
        "column": column,
        "rows": rows,
        "n": n,
        "missing": rows - n,
        "events": int(round(total_events)),
        "distinct": distinct,
        "minimum": minimum,
        "maximum": maximum,
        "exact": counts.exact,
    }
    if too_few_values(counts) or one_outcome_class(counts):
        return ColumnScan(flags=tuple(flags), **profile), None  # type: ignore[arg-type]
    # Adjusted checks fit every row, so the triage leaves out the searched forms (FP2,
    # hinge, indicator); opening the column fits them all.
    candidates = triage_candidates(settings.groups, settings.knots, counts.covariates is None)
    curve = None
    if forms:
        table = compare_forms(counts, candidates)
    else:
        table, curve = first_table(candidates, counts)
    linear = table.linear
    spline = table.row(SPLINE.key)
    if any(r.status == "separation" for r in (linear, spline) if r is not None):
        flags.append(F.SEPARATION)
    elif any(r.status == "not-converged" for r in (linear, spline) if r is not None):
        flags.append(F.NOT_CONVERGED)
    minority = min(total_events, total_rows - total_events)
    if minority < 10 * (settings.knots - 1):
        flags.append(F.LOW_EVENTS)
    best = table.best() if forms else None
    fitted = {
        **profile,
        "flags": tuple(flags),
        "best_form": best.recoding.describe() if best and best.recoding else None,
        "delta_aic": (best.aic - linear.aic) if best and linear.status == "ok" else None,
        "forms_fitted": forms,
    }
    if spline is not None and spline.status == "failed" and linear.status == "ok":
        return _values_scored(ColumnScan(**fitted), counts, table), table  # type: ignore[arg-type]
    if spline is None or spline.status != "ok" or linear.status != "ok" or spline.lr_df is None:
        return ColumnScan(**fitted), table  # type: ignore[arg-type]
    score, p_value, statistic = spline.lr_chi2, spline.lr_p, LR
    if counts.survey:
        # Survey weights: the sandwich Wald of the non-linear terms (Binder 1983).
        wald = robust_wald(spline.recoding, spline.fit, counts, spline.lr_df)  # type: ignore[arg-type]
        if wald is None:
            statistic = LR_APPROXIMATE
        else:
            score, p_value, statistic = wald.chi2, wald.p_value, WALD_ROBUST
    scored = ColumnScan(
        **fitted,  # type: ignore[arg-type]
        score=score,
        df=spline.lr_df,
        p_value=p_value,
        score_test=SPLINE_TEST,
        statistic=statistic,
        shape=_shape_hint(table, counts, forms, curve),
    )
    return scored, table


def _values_scored(result: ColumnScan, counts: ReducedCounts, table: ComparisonTable) -> ColumnScan:
    """Tied quantiles left the spline no knots: score by one indicator per value instead."""
    values = values_score(counts, table.linear)
    if values is None:
        return result
    shape = curve_shape(values.values, values.log_odds)
    return replace(
        result,
        score=values.chi2,
        df=values.df,
        p_value=values.p_value,
        score_test=VALUES_TEST,
        statistic=LR_APPROXIMATE if counts.survey else LR,
        shape=shape,
    )


@dataclass(frozen=True)
class ReducedColumn:
    """One column ready to score: its counts and what the flags need from its rows.

    Small (a few thousand numbers at most), so it is cheap to hand to another process.
    """

    counts: ReducedCounts
    """Counts per distinct value or per bin."""
    rows: int
    """Rows with an outcome."""
    nonfinite: int
    """Rows holding +inf or -inf."""
    integer_valued: bool
    """Every finite value is a whole number (and there is at least one)."""
    present: int | None = None
    """Rows used in the fits (finite x, weight above zero, covariates complete)."""
    adjusted_for: tuple[str, ...] = ()
    """Covariates in every fit."""
    weight: str | None = None
    """Weight column, if any."""
    present_events: int | None = None
    """Event rows among the ``present`` rows (rows, not weights)."""
    weight_kind: str | None = None
    """``frequency`` or ``survey`` when weighted."""


def reduce_for_scan(
    x: np.ndarray,
    y: np.ndarray,
    settings: ScanSettings = ScanSettings(),
    adjust: Adjustment | None = None,
    column: str = "",
) -> ReducedColumn:
    """Reduce one numeric column (NaN = missing, ±inf counted) against a 0/1 outcome.

    With covariates the rows stay rows (``rows_with_covariates``); with weights alone the
    counts are weighted sums per distinct value, still exact.
    """
    x = np.asarray(x, dtype=float)
    nonfinite = int(np.isinf(x).sum())
    if adjust is None:
        counts = reduce_column(x, y, max_levels=settings.max_levels)
        return ReducedColumn(counts, int(x.size), nonfinite, _whole_numbers(x, counts))
    used = np.isfinite(x)
    rows = int(x.size)
    if adjust.weights is not None:
        weighted = adjust.weights > 0  # zero-weight rows are dropped, not missing
        used &= weighted
        rows = int(weighted.sum())
    design = adjust.covariates_for(column)
    if design is not None:
        used &= design.complete
    weights = adjust.weights_over(used)
    survey = weights is not None and adjust.weight_kind == SURVEY  # squares for the sandwich
    if design is not None:
        counts = rows_with_covariates(x, y, design.matrix, weights, squares=survey)
    else:
        counts = reduce_column(x, y, weights, settings.max_levels, squares=survey)
    return ReducedColumn(
        counts,
        rows,
        nonfinite,
        _whole_numbers(x, counts),
        int(used.sum()),
        adjust.adjusted_for(column),
        adjust.weight_column,
        int(np.count_nonzero(np.asarray(y)[used] == 1)),
        adjust.weight_kind,
    )


def _whole_numbers(x: np.ndarray, counts: ReducedCounts) -> bool:
    """Every finite value is a whole number (and there is one)."""
    if counts.exact and counts.covariates is None:  # every distinct value is in x
        return bool(counts.x.size) and bool(np.all(np.floor(counts.x) == counts.x))
    # A binned column has thousands of values: its first few usually settle it.
    head = x[:1000]
    head = head[np.isfinite(head)]
    if np.any(np.floor(head) != head):
        return False
    finite = x[np.isfinite(x)]
    return bool(finite.size) and bool(np.all(np.floor(finite) == finite))


def scan_reduced(
    column: str,
    reduced: ReducedColumn,
    settings: ScanSettings = ScanSettings(),
    forms: bool = True,
) -> tuple[ColumnScan, ComparisonTable | None]:
    """Score a column from ``reduce_for_scan`` (q-value left for ``rank``); ``forms=False``
    is the first pass (see ``scan_counts``)."""
    result, table = scan_counts(
        column,
        reduced.counts,
        reduced.rows,
        reduced.nonfinite,
        reduced.integer_valued,
        settings,
        reduced.present,
        forms,
    )
    if reduced.adjusted_for or reduced.weight:
        result = replace(result, adjusted_for=reduced.adjusted_for, weight=reduced.weight)
    if reduced.present_events is not None:  # n and events both count rows
        result = replace(result, events=reduced.present_events)
    if reduced.weight:
        result = replace(
            result,
            weight_kind=reduced.weight_kind,
            weighted_n=reduced.counts.rows,
            weighted_events=reduced.counts.total_events,
        )
    return result, table


def scan_column(
    column: str,
    x: np.ndarray,
    y: np.ndarray,
    settings: ScanSettings = ScanSettings(),
    adjust: Adjustment | None = None,
) -> tuple[ColumnScan, ComparisonTable | None]:
    """Score one numeric column against a 0/1 outcome (NaN = missing, ±inf flagged)."""
    return scan_reduced(column, reduce_for_scan(x, y, settings, adjust, column), settings)


def with_q_value(scan: ColumnScan, q_value: float) -> ColumnScan:
    """The column's result with its q-value (``rank``'s rule: at least ``Q_LINEAR`` reads
    as ``linear``). A second-pass result takes the q-value its first-pass score got."""
    shape = LINEAR if q_value >= Q_LINEAR else scan.shape
    return replace(scan, q_value=float(q_value), shape=shape)


def evidence_order(scan: ColumnScan) -> tuple[int, float, float, str]:
    """Sort key of ``rank``: scored columns by p-value, larger score first, then name."""
    if scan.p_value is None:
        return (1, 0.0, 0.0, scan.column)
    return (0, scan.p_value, -(scan.score or 0.0), scan.column)


def rank(scans: Iterable[ColumnScan]) -> list[ColumnScan]:
    """Add q-values across scored columns and sort, most non-linear first.

    Columns whose q-value is at least ``Q_LINEAR`` get the hint ``linear``.
    """
    scans = list(scans)
    scored = [i for i, s in enumerate(scans) if s.p_value is not None]
    q = bh_qvalues([scans[i].p_value for i in scored])  # type: ignore[misc]
    for i, qv in zip(scored, q, strict=True):
        scans[i] = with_q_value(scans[i], qv)
    return sorted(scans, key=evidence_order)

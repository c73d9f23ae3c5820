"""Everything a report says, computed once; the renderers only lay it out."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from datetime import UTC, datetime

import numpy as np

from tui import __version__
from tui.cautions import CAUTIONS
from tui.engine.adjust import Adjustment, open_adjustment
from tui.engine.column_fits import CandidateSet, fit_column
from tui.engine.compare import ComparisonTable, FormFit
from tui.engine.counts import ReducedCounts
from tui.engine.groups import logit_groups
from tui.engine.plot_window import PlotWindow, plot_window
from tui.engine.recorded import fit_recoding
from tui.engine.reduced_data import ReducedData
from tui.engine.runner import scan_columns
from tui.engine.scan import Q_LINEAR, ScanSettings, rank, reduce_for_scan
from tui.engine.score_words import SURVEY_LR_NOTE, statistics_word
from tui.engine.smoother import smoothed_log_odds
from tui.engine.stability import DEFAULT_RESAMPLES, DEFAULT_SEED, METHOD, selection_shares
from tui.intake.dataset import ColumnarDataset, Dataset, file_sha256
from tui.intake.weights import FREQUENCY, SURVEY
from tui.names import with_closest
from tui.problems import InputProblem
from tui.recodings.decisions import decided_counts
from tui.recodings.evidence import Evidence
from tui.recodings.model import Decision, RecodingLog
from tui.report.cells import cell, group_is_safe
from tui.report.missing_part import MissingPart, missing_part
from tui.report.source_data import (
    FetchedFrom,
    data_name,
    plain_counts,
    refuse_rows,
    source_lines,
)
from tui.report.words import params_in_words

DERIVED_FROM_VALUES = (
    "Numbers that derive from individual values: knots (quantiles of x), cut points and band "
    "edges (quantiles or values of x, or entered by hand), the shift of log and power forms "
    "(the smallest value and the smallest gap between values), group medians, and a "
    "missing-value fill (the training median, or typed). The log "
    "also stores each column's training minimum and maximum, which this report never prints."
)


@dataclass(frozen=True)
class GroupLine:
    """One quantile group, counts already passed through the small-cell rule."""

    rank: int
    median: float | None
    n: str
    events: str
    nonevents: str
    logit: float | None
    se: float | None


@dataclass(frozen=True)
class FormLine:
    """One candidate form as compared on the report's data."""

    label: str
    df: int
    deviance: float
    aic: float
    delta_aic: float
    lr_p: float | None
    status: str
    notes: tuple[str, ...]
    accepted: bool


@dataclass(frozen=True)
class Curve:
    """Fitted log-odds on a grid across the plot window's x range; NaN where a curve
    leaves the window (cut there, as on the review screen)."""

    x: tuple[float, ...]
    linear: tuple[float, ...]
    accepted: tuple[float, ...]


@dataclass(frozen=True)
class DecisionSection:
    """Everything said about one decision."""

    column: str
    form: str
    in_words: str
    outputs: tuple[str, ...]
    note: str
    decided_at: str
    decided_by: str | None
    evidence: Evidence
    forms: tuple[FormLine, ...]
    groups: tuple[GroupLine, ...]
    curve: Curve | None
    withheld_groups: int
    missing: MissingPart | None = None
    window: PlotWindow | None = None
    """The picture's window, set as the review screen sets it (``plot_window``)."""
    smoother: tuple[tuple[float, ...], tuple[float, ...]] | None = None
    """The LOWESS smoother inside the window (x, log-odds), as on the review screen."""
    shares: str = ""
    lr_note: str = ""
    """Said beside the candidate table's LR p column: empty, or that it is approximate
    (survey weights)."""


@dataclass(frozen=True)
class ReportContent:
    """A whole report."""

    intro: str
    fingerprint: dict[str, str]
    summary: dict[str, str]
    decisions: tuple[DecisionSection, ...]
    set_aside: tuple[tuple[str, str], ...]
    cautions: tuple[str, ...]
    min_cell: int
    cell_rule: str
    derived: str
    version: str
    dated_line: str = field(default="")


def _finite(v: float | None) -> float | None:
    return None if v is None or not math.isfinite(v) else float(v)


def _was_searched(decision: Decision) -> bool:
    """Whether the recorded numbers were searched (not typed): the evidence's df counts
    more numbers than the form's outputs. Without a recorded df the numbers count as
    fixed in the log (nothing searched on the report's data)."""
    recoding, row = decision.recoding, decision.evidence.row
    if recoding.form.searched_df == 0 or row.df is None:
        return False
    return row.df > len(recoding.suffixes())


def _shares_text(
    counts: ReducedCounts, table: ComparisonTable, wanted: CandidateSet, evidence: Evidence
) -> str:
    """The bootstrap selection shares on the report's data, with the decision's seed."""
    recorded = evidence.selection
    resamples = recorded.resamples if recorded else DEFAULT_RESAMPLES
    seed = recorded.seed if recorded else DEFAULT_SEED
    shares = selection_shares(counts, table, wanted.candidates(), resamples, seed)
    if shares is None:
        return "Bootstrap selection shares: not computed for adjusted checks."
    labels = {r.key: r.recoding.describe() if r.recoding else r.label for r in table.rows}
    return f"Bootstrap selection shares ({METHOD}): {shares.leaders(labels, top=3)}, seed {seed}."


def _form_line(row: FormFit, accepted: bool, title: str | None = None) -> FormLine:
    # Searched forms are shown with what the search found (e.g. "hinge at 27.6").
    label = row.label if row.recoding is None else row.recoding.describe()
    if accepted and title:
        label = title
    return FormLine(
        label=label,
        df=row.df,
        deviance=row.deviance,
        aic=row.aic,
        delta_aic=row.delta_aic,
        lr_p=_finite(row.lr_p),
        status=row.status,
        notes=row.notes,
        accepted=accepted,
    )


def _withheld(count: float, min_cell: int, safe: bool) -> str:
    """A group's events or non-events: the count, ``<N``, or withheld with the rest."""
    if safe:
        return cell(count, min_cell)
    return f"<{min_cell}" if count < min_cell else "withheld"


def _section(
    data: Dataset | ColumnarDataset | ReducedData,
    decision: Decision,
    min_cell: int,
    adjust: Adjustment | None,
) -> DecisionSection:
    plain = plain_counts(data, decision.column)  # groups show rows, unweighted, unadjusted
    # An entry that did not record them reads as the scan's defaults (see Evidence).
    groups_n, knots_n = decision.evidence.groups, decision.evidence.knots
    settings = ScanSettings(groups=groups_n, knots=knots_n)
    counts = (
        plain
        if adjust is None
        else reduce_for_scan(
            data.values(decision.column), data.outcome.y, settings, adjust, decision.column
        ).counts
    )
    table = fit_column(counts, CandidateSet(groups_n, knots_n), smooth=False).table
    if table is None:  # no finite values, or one outcome class among the rows with one
        raise InputProblem(f"{data_name(data)}: '{decision.column}' cannot be fitted again")
    # The accepted form appears once: its candidate row when the table holds the same
    # recoding, else the recorded one refitted first (its df by the one df rule).
    same = next((r for r in table.rows if r.recoding == decision.recoding), None)
    title = f"accepted: {decision.recoding.describe()}"
    if same is not None:
        chosen = same
        forms = [_form_line(r, r is same, title) for r in table.rows]
    else:
        searched = _was_searched(decision)
        chosen = fit_recoding(decision.recoding, counts, table.linear, title, searched)
        forms = [_form_line(chosen, True, title)] + [_form_line(r, False) for r in table.rows]
    wanted = CandidateSet(groups_n, knots_n)
    shares = _shares_text(counts, table, wanted, decision.evidence)

    lines, withheld, shown = [], 0, []
    for i, g in enumerate(logit_groups(plain, groups_n), 1):
        safe = group_is_safe(g.n, g.events, min_cell)
        withheld += 0 if safe else 1
        if safe and g.n >= min_cell:
            shown.append(g)  # the window comes from what the report prints only
        lines.append(
            GroupLine(
                rank=i,
                median=g.median if g.n >= min_cell else None,
                n=cell(g.n, min_cell),
                events=_withheld(g.events, min_cell, safe),
                nonevents=_withheld(g.n - g.events, min_cell, safe),
                logit=g.logit if safe else None,
                se=g.se if safe else None,
            )
        )
    curve, window, smooth = None, None, None
    if len(shown) >= 2:
        sx, sy = smoothed_log_odds(plain)
        window = plot_window(plain, shown, (sx, sy))
        inside = (sx >= window.x_low) & (sx <= window.x_high) & np.isfinite(sy)
        if inside.any():
            smooth = (tuple(float(v) for v in sx[inside]), tuple(float(v) for v in sy[inside]))
    if window is not None and chosen.fit is not None and table.linear.fit is not None:
        grid = window.grid(121)
        curve = Curve(
            tuple(float(v) for v in grid),
            tuple(float(v) for v in window.clip(table.linear.log_odds(grid))),
            tuple(float(v) for v in window.clip(chosen.log_odds(grid))),
        )
    return DecisionSection(
        column=decision.column,
        form=decision.recoding.describe(),
        in_words=params_in_words(decision.recoding),
        outputs=decision.outputs,
        note=decision.note,
        decided_at=decision.decided_at,
        decided_by=decision.decided_by,
        evidence=decision.evidence,
        forms=tuple(forms),
        groups=tuple(lines),
        curve=curve,
        withheld_groups=withheld,
        missing=missing_part(data, decision, min_cell),
        window=window,
        smoother=smooth,
        shares=shares,
        lr_note=SURVEY_LR_NOTE if adjust is not None and adjust.weight_kind == SURVEY else "",
    )


def build_report(
    log: RecodingLog,
    data: Dataset | ColumnarDataset | ReducedData,
    min_cell: int = 10,
    now: datetime | None = None,
    weight: str | None = None,
    weight_kind: str = FREQUENCY,
    origin: FetchedFrom | None = None,
) -> ReportContent:
    """Recompute the evidence for every decision in ``log`` from ``data`` (rows fetched
    from a source when ``origin`` names it).

    A decision judged with covariates (its evidence's ``adjusted_for``) is recomputed with the same
    covariates, each in its accepted form when the log holds one; ``weight`` weights every fit.
    """
    if min_cell < 1:
        raise InputProblem(f"--min-cell must be at least 1, not {min_cell}")
    needed = [d.column for d in log.decisions]
    missing = [c for c in needed if c not in data.column_names]
    if missing:
        raise InputProblem(
            f"{data_name(data, origin)} lacks column(s) the log recodes: "
            f"{with_closest(missing, data.column_names)}"
        )
    not_numeric = [c for c in needed if c not in data.columns]
    if not_numeric:
        raise InputProblem(
            f"column(s) not numeric in {data_name(data, origin)}: {', '.join(not_numeric)}"
        )

    forms = {d.column: d.recoding for d in log.decisions}
    if isinstance(data, ReducedData):
        refuse_rows(data, log, weight)
        scans = rank(data.scans(listed_too=False))
    else:
        weighted = open_adjustment(data, log.outcome_column, (), weight, weight_kind)
        columns = [c for c in data.columns if c != weight]
        scans = rank(
            scan_columns(columns, data.raw_values, data.outcome.y, ScanSettings(), adjust=weighted)
        )

    def adjustment_for(decision: Decision) -> Adjustment | None:
        if isinstance(data, ReducedData):
            return None
        covariates = decision.evidence.adjusted_for
        return open_adjustment(data, log.outcome_column, covariates, weight, weight_kind, forms)

    counts = decided_counts(log)
    flagged = sum(1 for s in scans if s.q_value is not None and s.q_value < Q_LINEAR)
    if origin is not None:
        sha = origin.record.fingerprint
    else:
        sha = data.fingerprint if isinstance(data, ReducedData) else file_sha256(data.path)
    adjust = sorted({a for d in log.decisions for a in d.evidence.adjusted_for})
    judged = {w for d in log.decisions if (w := d.evidence.weights.column)}
    weights = sorted(judged | ({f"{weight} ({weight_kind}), used here"} if weight else set()))
    y = data.outcome
    named, hashed = source_lines(data, log, sha, origin)
    fingerprint = {
        **named,
        "rows with an outcome": str(data.rows),
        "rows dropped for a missing outcome": str(y.dropped_missing),
        **hashed,
        "outcome": log.outcome_column,
        "event": str(log.event),
        "events": cell(y.events, min_cell),
        "non-events": cell(y.nonevents, min_cell),
    }
    summary = {
        "numeric columns scanned": str(len(scans)),
        f"columns with q < {Q_LINEAR} (spline against linear)": str(flagged),
        "score statistic": statistics_word(s.statistic for s in scans),
        # Decided: recoded, kept linear or set aside (the three counts of every surface).
        "columns decided": str(counts.decided),
        "columns recoded": str(counts.recoded),
        "columns kept linear": str(counts.kept_linear),
        "columns set aside": str(counts.set_aside),
        "adjusted for": ", ".join(adjust) if adjust else "nothing (one column at a time)",
        "weights": ", ".join(weights) if weights else "none",
    }
    ranked_by = "likelihood-ratio test"
    if weight and weight_kind == SURVEY:  # the design-based score (Binder 1983)
        ranked_by = "robust (sandwich) Wald test of the non-linear terms"
    intro = (
        f"Each numeric candidate predictor of '{log.outcome_column}' in "
        f"{data_name(data, origin)} was "
        "checked for linearity on the log-odds scale: columns were ranked by the "
        f"{ranked_by} of a restricted cubic spline against a linear term, with "
        "Benjamini-Hochberg q-values across columns, and an analyst reviewed the grouped "
        "empirical logits and a table of candidate forms before recording each decision. "
        "The evidence below is recomputed from the data named here."
    )
    stamp = (now or datetime.now(UTC)).replace(microsecond=0).isoformat()
    return ReportContent(
        intro=intro,
        fingerprint=fingerprint,
        summary=summary,
        decisions=tuple(_section(data, d, min_cell, adjustment_for(d)) for d in log.decisions),
        set_aside=tuple((s.column, s.note) for s in log.set_aside),
        cautions=CAUTIONS,
        min_cell=min_cell,
        cell_rule=(
            f"No count below {min_cell} is printed: such counts show as <{min_cell}. Where a "
            "group's events or non-events fall below it, the group's rate and empirical logit "
            "are withheld too (a rate and a group size give the count back). Column minima and "
            "maxima are not printed."
        ),
        derived=DERIVED_FROM_VALUES,
        version=f"bendwise {__version__}",
        dated_line=f"Written {stamp} by bendwise {__version__}.",
    )

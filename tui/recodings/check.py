"""Does each logged choice hold on a later extract? ``bendwise check LOG DATA``.

Every number in the log stays fixed (knots, cut points, shifts, powers, edges, clip):
nothing is learned again, only the coefficients are refitted on the fresh rows, and the
accepted form is compared with linear there. Since nothing is searched on the fresh data,
no df is added for a search (the one df rule, ``tui.table_rules.DF_RULE``). The column's
drift is measured against the training deciles the log keeps.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from tui.engine.compare import fit_candidate
from tui.engine.counts import ReducedCounts, reduce_column, rows_with_covariates
from tui.engine.drift import PSI_LARGE, stability_index
from tui.engine.forms.base import Recoding
from tui.engine.forms.linear import LinearCandidate
from tui.engine.recorded import fit_recoding
from tui.recodings.model import Decision, RecodingLog
from tui.table_rules import BEST_MARGIN

HOLDS, WEAKER, NOT_BETTER, NOT_FITTED = "holds", "weaker", "not better", "could not be fitted"
DRIFT = "drift"
KEPT_LINEAR, SET_ASIDE = "kept linear", "set aside"
RULE = (
    f"verdict: '{HOLDS}' when the accepted form still beats linear on these data by "
    f"ΔAIC ≤ −{BEST_MARGIN:g} (its numbers fixed from the log, only coefficients refitted), "
    f"'{WEAKER}' when it is better by less, '{NOT_BETTER}' otherwise; '{DRIFT}' when the "
    f"population stability index against the training deciles exceeds {PSI_LARGE:g} "
    "(under 0.1 stable, 0.1-0.25 moderate: common practice, from memory)"
)
"""The verdict rule, printed with every check."""


@dataclass(frozen=True)
class ColumnCheck:
    """One column of the log, checked on a later extract."""

    column: str
    """The log's column name."""
    kind: str
    """The recoding's kind key, or ``set aside``."""
    form: str
    """The recoding in words (or what was decided)."""
    rows: int
    """Rows of the extract with an outcome."""
    events: int
    """Events among them."""
    missing: int | None
    """Rows whose value is missing (or not finite); None for a set-aside column the
    extract lacks."""
    outside_range: float | None
    """Share of the present values outside the training range; None when not known."""
    psi: float | None
    """Population stability index against the training deciles; None when not recorded."""
    verdict: str | None = None
    """``holds``, ``weaker``, ``not better`` or ``could not be fitted``; None for a column
    kept linear or set aside (listed for its drift only)."""
    delta_aic: float | None = None
    """AIC of the accepted form minus linear's, on the extract."""
    lr_chi2: float | None = None
    """Likelihood-ratio chi-square against linear, where the form nests linear."""
    lr_df: int | None = None
    """Its degrees of freedom."""
    lr_p: float | None = None
    """Its p-value."""

    @property
    def drift(self) -> bool:
        """The stability index is large."""
        return self.psi is not None and self.psi > PSI_LARGE

    @property
    def holds(self) -> bool:
        """A recoding whose verdict is ``holds`` (kept-linear and set-aside columns have none)."""
        return self.verdict in (None, HOLDS)

    def as_record(self) -> dict[str, Any]:
        """JSON-ready: every key always present, null where not applicable."""
        return {
            "column": self.column,
            "kind": self.kind,
            "form": self.form,
            "verdict": self.verdict,
            "drift": self.drift if self.psi is not None else None,
            "delta_aic": _finite(self.delta_aic),
            "lr_chi2": _finite(self.lr_chi2),
            "lr_df": self.lr_df,
            "lr_p": _finite(self.lr_p),
            "psi": _finite(self.psi),
            "outside_range": _finite(self.outside_range),
            "rows": self.rows,
            "events": self.events,
            "missing": self.missing,
        }


def _finite(value: float | None) -> float | None:
    return None if value is None or not np.isfinite(value) else float(value)


def verdict_of(delta_aic: float) -> str:
    """The verdict word for a ΔAIC against linear on fresh data."""
    if delta_aic <= -BEST_MARGIN:
        return HOLDS
    return WEAKER if delta_aic < 0 else NOT_BETTER


def _counts(recoding: Recoding, x: np.ndarray, y: np.ndarray) -> ReducedCounts:
    """The counts the comparison is fitted on. A recoding that fills a missing x is compared
    on every row with an outcome, as it will be used: x filled, and its missing indicator
    (when it has one) in both fits, the accepted form's and linear's alike."""
    rule = recoding.missing
    if rule is None:
        return reduce_column(x, y)
    absent = ~np.isfinite(x)
    filled = np.where(absent, rule.fill, x)
    if not rule.indicator:
        return reduce_column(filled, y)
    return rows_with_covariates(filled, y, absent.astype(float)[:, None])


def check_decision(decision: Decision, x: np.ndarray, y: np.ndarray) -> ColumnCheck:
    """One decision checked on a later extract's values ``x`` and outcome ``y``."""
    present = np.isfinite(x)
    xv = x[present]
    lo, hi = decision.range
    outside = float(np.mean((xv < lo) | (xv > hi))) if xv.size else None
    psi = stability_index(decision.deciles, x) if decision.deciles is not None else None
    recoding = decision.recoding
    base = ColumnCheck(
        column=decision.column,
        kind=recoding.kind,
        form=KEPT_LINEAR if _kept_linear(decision) else recoding.describe(),
        rows=int(x.size),
        events=int(y.sum()),
        missing=int((~present).sum()),
        outside_range=outside,
        psi=psi,
    )
    if _kept_linear(decision):
        return base
    return fitted_check(base, recoding, _counts(recoding, x, y))


def fitted_check(base: ColumnCheck, recoding: Recoding, counts: ReducedCounts) -> ColumnCheck:
    """The verdict of ``recoding`` against linear on ``counts`` (its numbers fixed)."""
    if counts.distinct < 2 or counts.total_events in (0, counts.rows):
        return _with(base, verdict=NOT_FITTED)
    with np.errstate(all="ignore"):
        linear = fit_candidate(LinearCandidate(), counts)
        fixed = fit_recoding(recoding, counts, linear)
    if linear.status != "ok" or fixed.status != "ok" or not np.isfinite(fixed.delta_aic):
        return _with(base, verdict=NOT_FITTED)
    return _with(
        base,
        verdict=verdict_of(fixed.delta_aic),
        delta_aic=fixed.delta_aic,
        lr_chi2=fixed.lr_chi2,
        lr_df=fixed.lr_df,
        lr_p=fixed.lr_p,
    )


def _kept_linear(decision: Decision) -> bool:
    return decision.recoding.kind == "linear" and decision.recoding.clip is None


def _with(base: ColumnCheck, **changes: Any) -> ColumnCheck:
    return replace(base, **changes)


def check_log(
    log: RecodingLog,
    values_of: Callable[[str], np.ndarray | None],
    y: np.ndarray,
    renames: Mapping[str, str] | None = None,
) -> list[ColumnCheck]:
    """Every decision of ``log`` checked on a later extract (``values_of(name)`` gives a
    column's values, None when the extract lacks it; ``renames`` maps a log name to the
    extract's), then the set-aside columns, whose drift the log cannot tell (it keeps no
    deciles for them). Raises KeyError naming a recoded column the extract lacks."""
    renames = dict(renames or {})
    checks = []
    for decision in log.decisions:
        x = values_of(renames.get(decision.column, decision.column))
        if x is None:
            raise KeyError(decision.column)
        checks.append(check_decision(decision, x, y))
    for entry in log.set_aside:
        x = values_of(renames.get(entry.column, entry.column))
        missing = None if x is None else int((~np.isfinite(x)).sum())
        rows, events = int(y.size), int(y.sum())
        checks.append(
            ColumnCheck(entry.column, SET_ASIDE, SET_ASIDE, rows, events, missing, None, None)
        )
    return checks

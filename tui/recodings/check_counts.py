"""``bendwise check`` on a source: every figure from counts the engine reduced or tallied.

Drift and the share outside the training range come from threshold tallies run in the
engine (exact); the verdict refits the recoding on the column's counts per distinct value
(exact) or per bin (within the binning tolerance, as a scan). A recoding that fills its
missing values is compared on every row with an outcome, as on a file: the missing rows
sit at the fill as one more count, with their indicator where the recoding has one.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping

import numpy as np

from tui.engine.counts import ReducedCounts
from tui.engine.drift import stability_from_tally
from tui.engine.forms.base import Recoding
from tui.engine.missing_group import MissingGroup
from tui.recodings.check import (
    KEPT_LINEAR,
    SET_ASIDE,
    ColumnCheck,
    _kept_linear,
    fitted_check,
)
from tui.recodings.model import Decision, RecodingLog

Tally = Callable[[Mapping[str, list[float]]], dict[str, tuple[int, np.ndarray, np.ndarray]]]
"""The engine's threshold tally (``Source.tally``)."""


def thresholds(decision: Decision) -> list[float]:
    """Where the engine tallies a column: the training range's ends, then the deciles."""
    lo, hi = decision.range
    return [float(lo), float(hi), *(decision.deciles or ())]


def counts_for(
    recoding: Recoding, counts: ReducedCounts, group: MissingGroup | None
) -> ReducedCounts:
    """The counts the comparison is fitted on (see ``check._counts``)."""
    rule = recoding.missing
    if rule is None:
        return counts
    if group is None:  # nothing to fill: an indicator that is zero on every row, as on a file
        zeros = np.zeros((counts.x.size, 1)) if rule.indicator else None
        return (
            counts
            if zeros is None
            else ReducedCounts(counts.x, counts.trials, counts.events, True, covariates=zeros)
        )
    x = np.append(counts.x, rule.fill)
    trials = np.append(counts.trials, group.n)
    events = np.append(counts.events, group.events)
    order = np.argsort(x, kind="stable")
    flag = np.zeros((x.size, 1))
    flag[-1, 0] = 1.0
    if rule.indicator:
        return ReducedCounts(x[order], trials[order], events[order], True, covariates=flag[order])
    return ReducedCounts(x[order], trials[order], events[order], counts.exact)


def check_counts(
    decision: Decision,
    counts: ReducedCounts,
    group: MissingGroup | None,
    rows: int,
    events: int,
    tallied: tuple[int, np.ndarray, np.ndarray],
) -> ColumnCheck:
    """One decision checked from the column's counts and its tally at ``thresholds``."""
    present, below, at_or_below = tallied
    outside = (int(below[0]) + present - int(at_or_below[1])) / present if present else None
    psi = (
        stability_from_tally(decision.deciles, present, below[2:], at_or_below[2:])
        if decision.deciles is not None
        else None
    )
    recoding = decision.recoding
    base = ColumnCheck(
        column=decision.column,
        kind=recoding.kind,
        form=KEPT_LINEAR if _kept_linear(decision) else recoding.describe(),
        rows=rows,
        events=events,
        missing=rows - present,
        outside_range=outside,
        psi=psi,
    )
    if _kept_linear(decision):
        return base
    return fitted_check(base, recoding, counts_for(recoding, counts, group))


def check_log_counts(
    log: RecodingLog,
    counts_of: Callable[[str], ReducedCounts | None],
    group_of: Callable[[str], MissingGroup | None],
    tally: Tally,
    rows: int,
    events: int,
    renames: Mapping[str, str] | None = None,
) -> list[ColumnCheck]:
    """``check.check_log`` on a source: ``counts_of(name)`` (None when the source lacks
    the column), ``group_of(name)`` its missing rows, ``tally`` the engine's."""
    renames = dict(renames or {})
    named = {d.column: renames.get(d.column, d.column) for d in log.decisions}
    for decision in log.decisions:
        if counts_of(named[decision.column]) is None:
            raise KeyError(decision.column)
    tallies = tally({named[d.column]: thresholds(d) for d in log.decisions})
    checks = []
    for d in log.decisions:
        name = named[d.column]
        counts = counts_of(name)
        assert counts is not None
        checks.append(check_counts(d, counts, group_of(name), rows, events, tallies[name]))
    for entry in log.set_aside:
        counts = counts_of(renames.get(entry.column, entry.column))
        missing = None if counts is None else rows - int(round(counts.rows))
        checks.append(
            ColumnCheck(entry.column, SET_ASIDE, SET_ASIDE, rows, events, missing, None, None)
        )
    return checks

"""One column's candidate forms, assembled and fitted: what the review screen draws and
the report recomputes.

The candidate set is the engine's defaults for some groups and knots, then any hinge knots
and indicator cut points typed by hand. ``fit_column`` applies the column rules the scan
applies (``fittable``) before fitting them, so every caller sees the same table.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tui.engine.compare import ComparisonTable, compare_forms, fit_candidate
from tui.engine.counts import ReducedCounts
from tui.engine.fittable import (
    NO_VALUES,
    ONE_CLASS,
    one_outcome_class,
    too_few_values,
    why_linear_only,
)
from tui.engine.forms.base import Candidate
from tui.engine.forms.hinge import HingeCandidate
from tui.engine.forms.indicator import BELOW, IndicatorCandidate
from tui.engine.forms.linear import LinearCandidate
from tui.engine.forms.registry import default_candidates
from tui.engine.groups import LogitGroup, logit_groups
from tui.engine.smoother import smoothed_log_odds

TAIL_SHARE = 0.05
"""The tails named beside a column are the quantiles at this share and one minus it."""


@dataclass(frozen=True)
class CandidateSet:
    """Which candidate forms to fit: the defaults for ``groups`` and ``knots``, and the
    forms made from numbers typed by hand."""

    groups: int
    """Quantile groups of the plot (and of the bands form)."""
    knots: int
    """Knots of the spline form."""
    cuts: tuple[float, ...] = ()
    """Indicator cut points entered by hand."""
    hinges: tuple[float, ...] = ()
    """Hinge knots entered by hand."""
    side: str = BELOW
    """Which side of its cut point an indicator reads 1 (``below`` or ``above``)."""

    def by_hand(self) -> list[Candidate]:
        """The candidates made from hand-entered numbers (hinges first)."""
        hand: list[Candidate] = [HingeCandidate(knot=k) for k in self.hinges]
        return hand + [IndicatorCandidate(cut=c, side=self.side) for c in self.cuts]

    def candidates(self) -> list[Candidate]:
        """The engine's default candidates, then the hand-entered ones."""
        return default_candidates(self.groups, self.knots, self.side) + self.by_hand()

    def hand_labels(self) -> set[str]:
        """Labels of the candidates entered by hand."""
        return {c.label for c in self.by_hand()}


@dataclass(frozen=True)
class Fitted:
    """Every candidate of a ``CandidateSet`` fitted to one column, with its picture."""

    counts: ReducedCounts
    """The column reduced to counts per distinct value (one per row when adjusted)."""
    groups: tuple[LogitGroup, ...]
    """Empirical logits of the quantile groups."""
    table: ComparisonTable | None
    """Every candidate fitted; None when the column cannot be fitted."""
    tails: tuple[float, float] | None
    """The ``TAIL_SHARE`` and ``1 - TAIL_SHARE`` quantiles of x (percentiles: a lumpy
    column may hold far more than that share of its rows at either value)."""
    problem: str | None = None
    """Why the table is missing or holds the linear form only."""
    smoother: tuple[np.ndarray, np.ndarray] | None = None
    """LOWESS of the outcome on x, on the log-odds scale (x, log-odds); None when absent."""


def fit_column(counts: ReducedCounts, wanted: CandidateSet, smooth: bool = True) -> Fitted:
    """Group, smooth and fit ``wanted`` on ``counts``: the linear form alone for a column
    of two values or fewer, no table for one outcome class. ``smooth=False`` leaves the
    LOWESS out (the report draws none)."""
    if counts.distinct == 0:
        return Fitted(counts, (), None, None, NO_VALUES)
    groups = tuple(logit_groups(counts, wanted.groups))
    smoother = smoothed_log_odds(counts) if smooth else None
    low, high = (float(v) for v in counts.quantile([TAIL_SHARE, 1 - TAIL_SHARE]))
    tails = (low, high)
    if one_outcome_class(counts):
        return Fitted(counts, groups, None, tails, ONE_CLASS, smoother)
    if too_few_values(counts):
        linear = ComparisonTable((fit_candidate(LinearCandidate(), counts),), None)
        return Fitted(counts, groups, linear, tails, why_linear_only(counts), smoother)
    with np.errstate(all="ignore"):
        table = compare_forms(counts, wanted.candidates(), groups=wanted.groups, knots=wanted.knots)
    return Fitted(counts, groups, table, tails, None, smoother)

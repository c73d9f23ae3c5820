"""Refit a recoding whose numbers are already fixed (from the log or entered by hand)."""

from __future__ import annotations

from dataclasses import dataclass

from tui.engine.compare import FormFit, fit_candidate
from tui.engine.counts import ReducedCounts
from tui.engine.forms.base import Candidate, Kind, Learned, Recoding

RECORDED_KEY = "recorded"
"""Table key of a fixed recoding's row, apart from every candidate's key."""


@dataclass
class FixedCandidate(Candidate):
    """A candidate that 'learns' the numbers it was given; nothing is searched."""

    recoding: Recoding
    title: str | None = None
    searched: bool = False
    """The numbers were searched on the data this row is fitted to (the one df rule:
    ``tui.table_rules.DF_RULE``), e.g. a report on the data the decision was made on."""

    @property
    def form(self) -> Kind:  # type: ignore[override]
        return self.recoding.form

    @property
    def key(self) -> str:
        return RECORDED_KEY

    @property
    def label(self) -> str:
        return self.title or self.recoding.describe()

    def learn(self, counts: ReducedCounts) -> Learned:
        return Learned(self.recoding, searched=self.searched)


def fit_recoding(
    recoding: Recoding,
    counts: ReducedCounts,
    linear: FormFit,
    title: str | None = None,
    searched: bool = False,
) -> FormFit:
    """Fit a fixed recoding to counts and compare it with the linear row; whether a
    likelihood-ratio test applies is the kind's to say (``Kind.nests_linear``). The counts
    hold complete cases only, so a missing-value fill is left out of this fit.
    ``searched``: count the search's df, as on the data the numbers were searched on."""
    return fit_candidate(
        FixedCandidate(recoding.without_missing(), title, searched), counts, linear
    )

"""Refit a recoding whose numbers are already fixed (from the log or entered by hand)."""

from __future__ import annotations

from dataclasses import dataclass

from tui.engine.compare import FormFit, fit_candidate
from tui.engine.counts import ReducedCounts
from tui.engine.forms.base import Candidate, Learned, Recoding


@dataclass
class FixedCandidate(Candidate):
    """A candidate that 'learns' the numbers it was given; nothing is searched."""

    recoding: Recoding
    title: str | None = None

    kind = "fixed"  # replaced per instance below

    def __post_init__(self) -> None:
        self.kind = self.recoding.kind  # type: ignore[misc]
        suffixes = self.recoding.suffixes()
        # Linear is nested when x itself is the first output and something is added to it.
        self.nests_linear = suffixes[0] == "lin" and len(suffixes) > 1  # type: ignore[misc]

    @property
    def label(self) -> str:
        return self.title or self.recoding.describe()

    def learn(self, counts: ReducedCounts) -> Learned:
        return Learned(self.recoding, df=len(self.recoding.suffixes()))


def fit_recoding(
    recoding: Recoding, counts: ReducedCounts, linear: FormFit, title: str | None = None
) -> FormFit:
    """Fit a fixed recoding to counts and compare it with the linear row."""
    return fit_candidate(FixedCandidate(recoding, title), counts, linear)

"""Every kind of recoding by its log key, and the default list of candidates."""

from __future__ import annotations

from tui.engine.forms.bands import BandsCandidate, BandsKind
from tui.engine.forms.base import Candidate, Kind
from tui.engine.forms.fracpoly import Fp1Candidate, Fp1Kind, Fp2Candidate, Fp2Kind
from tui.engine.forms.hinge import HingeCandidate, HingeKind
from tui.engine.forms.indicator import IndicatorCandidate, IndicatorKind
from tui.engine.forms.linear import LinearCandidate, LinearKind
from tui.engine.forms.log import LogCandidate, LogKind
from tui.engine.forms.quadratic import QuadraticCandidate, QuadraticKind
from tui.engine.forms.spline import DEFAULT_KNOTS, SplineCandidate, SplineKind

KINDS: dict[str, Kind] = {
    k.name: k
    for k in (
        LinearKind(),
        LogKind(),
        Fp1Kind(),
        Fp2Kind(),
        QuadraticKind(),
        SplineKind(),
        HingeKind(),
        IndicatorKind(),
        BandsKind(),
    )
}


def default_candidates(groups: int = 4, knots: int = DEFAULT_KNOTS) -> list[Candidate]:
    """The candidate forms compared for every column, linear first."""
    return [
        LinearCandidate(),
        LogCandidate(),
        Fp1Candidate(),
        Fp2Candidate(),
        QuadraticCandidate(),
        SplineCandidate(knots),
        HingeCandidate(),
        IndicatorCandidate(),
        BandsCandidate(groups),
    ]


def triage_candidates(groups: int, knots: int, searched: bool = True) -> list[Candidate]:
    """Candidates of a scan; without ``searched``, the forms that search many fits (FP2,
    hinge, indicator) are left out, for row-level adjusted scans."""
    every = default_candidates(groups, knots)
    if searched:
        return every
    return [c for c in every if c.kind not in ("fp2", "hinge", "indicator")]

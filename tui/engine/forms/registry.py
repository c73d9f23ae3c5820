"""Every kind of recoding by its log key, and the default list of candidates."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from tui.engine.forms.bands import BANDS, BandsCandidate
from tui.engine.forms.base import Candidate, Kind, MissingFill, Recoding, RecodingError
from tui.engine.forms.fracpoly import FP1, FP2, Fp1Candidate, Fp2Candidate
from tui.engine.forms.hinge import HINGE, HingeCandidate
from tui.engine.forms.indicator import BELOW, INDICATOR, IndicatorCandidate
from tui.engine.forms.linear import LINEAR, LinearCandidate
from tui.engine.forms.log import LOG, LogCandidate
from tui.engine.forms.quadratic import QUADRATIC, QuadraticCandidate
from tui.engine.forms.spline import DEFAULT_KNOTS, SPLINE, SplineCandidate

KINDS: dict[str, Kind] = {
    k.key: k for k in (LINEAR, LOG, FP1, FP2, QUADRATIC, SPLINE, HINGE, INDICATOR, BANDS)
}


def make_recoding(
    key: str,
    params: Mapping[str, Any] | None = None,
    clip: tuple[float, float] | None = None,
    missing: MissingFill | None = None,
) -> Recoding:
    """The recoding of the kind logged as ``key``; RecodingError for an unknown key."""
    if key not in KINDS:
        raise RecodingError(f"kind {key!r} is unknown; known kinds: {', '.join(KINDS)}")
    return Recoding(KINDS[key], dict(params or {}), clip, missing)


def default_candidates(
    groups: int = 4, knots: int = DEFAULT_KNOTS, side: str = BELOW
) -> list[Candidate]:
    """The candidate forms compared for every column, linear first; ``side``: which side
    of its cut the indicator reads 1."""
    return [
        LinearCandidate(),
        LogCandidate(),
        Fp1Candidate(),
        Fp2Candidate(),
        QuadraticCandidate(),
        SplineCandidate(knots),
        HingeCandidate(),
        IndicatorCandidate(side=side),
        BandsCandidate(groups),
    ]


def triage_candidates(groups: int, knots: int, searched: bool = True) -> list[Candidate]:
    """Candidates of a scan; without ``searched``, the forms that search many fits (FP2,
    hinge, indicator) are left out, for row-level adjusted scans."""
    every = default_candidates(groups, knots)
    if searched:
        return every
    return [c for c in every if not c.searches_many_fits]

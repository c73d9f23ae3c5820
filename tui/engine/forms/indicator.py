"""Threshold indicator: 1 when x < c, else 0."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import numpy as np

from tui.engine.counts import ReducedCounts
from tui.engine.forms.base import (
    Candidate,
    Kind,
    Learned,
    Recoding,
    RecodingError,
    check_number,
    search,
    sql_number,
)
from tui.engine.forms.cutpoints import cut_candidates


class IndicatorKind(Kind):
    name = "indicator"

    def validate(self, params: Mapping[str, Any]) -> None:
        check_number(params, "cut")

    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        return (x < float(params["cut"])).astype(float)[:, None]

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return ["below"]

    def describe(self, params: Mapping[str, Any]) -> str:
        return f"indicator x < {float(params['cut']):.6g}"

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        return [f"CASE WHEN {x} < {sql_number(float(params['cut']))} THEN 1.0 ELSE 0.0 END"]


class IndicatorCandidate(Candidate):
    """Cut point searched over the central percentiles unless given by hand."""

    kind = "indicator"

    def __init__(self, cut: float | None = None) -> None:
        self.cut = cut

    @property
    def label(self) -> str:
        return "indicator" if self.cut is None else f"indicator x < {self.cut:.6g}"

    def learn(self, counts: ReducedCounts) -> Learned:
        if self.cut is not None:
            return Learned(Recoding("indicator", {"cut": float(self.cut)}), df=1)
        options = [Recoding("indicator", {"cut": c}) for c in cut_candidates(counts)]
        if not options:
            raise RecodingError("too few distinct values to place a cut point")
        return Learned(search(options, counts), df=2, searched=True)

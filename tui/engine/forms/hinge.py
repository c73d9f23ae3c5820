"""Hinge (linear spline with one knot): x and max(x - c, 0)."""

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


class HingeKind(Kind):
    name = "hinge"

    def validate(self, params: Mapping[str, Any]) -> None:
        check_number(params, "knot")

    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        return np.column_stack([x, np.maximum(x - float(params["knot"]), 0.0)])

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return ["lin", "hinge"]

    def describe(self, params: Mapping[str, Any]) -> str:
        return f"hinge at {float(params['knot']):.6g}"

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        return [x, f"GREATEST({x} - {sql_number(float(params['knot']))}, 0.0)"]


class HingeCandidate(Candidate):
    """Knot searched over the central percentiles unless given by hand."""

    kind = "hinge"
    nests_linear = True

    def __init__(self, knot: float | None = None) -> None:
        self.knot = knot

    @property
    def label(self) -> str:
        return "hinge" if self.knot is None else f"hinge at {self.knot:.6g}"

    def learn(self, counts: ReducedCounts) -> Learned:
        if self.knot is not None:
            return Learned(Recoding("hinge", {"knot": float(self.knot)}), df=2)
        options = [Recoding("hinge", {"knot": c}) for c in cut_candidates(counts)[:-1]]
        if not options:
            raise RecodingError("too few distinct values to place a hinge")
        return Learned(search(options, counts), df=3, searched=True)

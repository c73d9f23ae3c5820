"""Hinge (linear spline with one knot): x and max(x - c, 0)."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from tui.engine.counts import ReducedCounts
from tui.engine.forms.base import (
    NOTE_CUT,
    Candidate,
    Kind,
    Learned,
    Recoding,
    RecodingError,
    check_number,
    sql_number,
    words_number,
)
from tui.engine.forms.cutpoints import cut_candidates
from tui.engine.forms.search import learned_by_search

FLAT_SHARE = 0.15
"""A fitted hinge reads as a threshold when one side's slope is under this share of the
other's."""


class HingeKind(Kind):
    key = label = "hinge"
    searched_df = 1  # the knot
    search_note = NOTE_CUT
    search_includes_linear = True  # x is an output whatever the knot

    def nests_linear(self, params: Mapping[str, Any]) -> bool:
        return True  # x is the first output

    def validate(self, params: Mapping[str, Any]) -> None:
        check_number(params, "knot")

    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        return np.column_stack([x, np.maximum(x - float(params["knot"]), 0.0)])

    def apply_many(self, params: Sequence[Mapping[str, Any]], x: np.ndarray) -> np.ndarray:
        knots = np.array([float(p["knot"]) for p in params])
        out = np.empty((knots.size, 2, x.size))  # member by member in memory (see FP2)
        out[:, 0] = x
        np.maximum(np.subtract(x[None, :], knots[:, None], out=out[:, 1]), 0.0, out=out[:, 1])
        return out.transpose(0, 2, 1)

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return ["lin", "hinge"]

    def describe(self, params: Mapping[str, Any]) -> str:
        return f"hinge at {float(params['knot']):.6g}"

    def words(self, params: Mapping[str, Any]) -> str:
        knot = words_number(float(params["knot"]))
        return f"x and max(x − {knot}, 0): the slope changes at {knot}"

    def shows_threshold(self, form_coef: np.ndarray) -> bool:
        below = form_coef[0]
        above = below + form_coef[1]
        return bool(min(abs(below), abs(above)) < FLAT_SHARE * max(abs(below), abs(above)))

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        return [x, f"GREATEST({x} - {sql_number(float(params['knot']))}, 0.0)"]


HINGE = HingeKind()


class HingeCandidate(Candidate):
    """Knot searched over the central percentiles unless given by hand."""

    form = HINGE

    def __init__(self, knot: float | None = None) -> None:
        self.knot = knot

    @property
    def key(self) -> str:
        return HINGE.key if self.knot is None else f"{HINGE.key}@{float(self.knot)!r}"

    @property
    def searches_many_fits(self) -> bool:
        return self.knot is None

    @property
    def label(self) -> str:
        return HINGE.label if self.knot is None else f"hinge at {self.knot:.6g}"

    def search_options(self, counts: ReducedCounts) -> list[Recoding] | None:
        if self.knot is not None:
            return None
        # A knot at the largest x would add a column of zeros: strictly inside the range.
        return [Recoding(HINGE, {"knot": c}) for c in cut_candidates(counts, upper_included=False)]

    def learn(self, counts: ReducedCounts) -> Learned:
        if self.knot is not None:
            return Learned(Recoding(HINGE, {"knot": float(self.knot)}))
        options = self.search_options(counts) or []
        if not options:
            raise RecodingError("too few distinct values to place a hinge")
        return learned_by_search(options, counts)

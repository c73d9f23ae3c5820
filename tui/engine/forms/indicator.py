"""Threshold indicator: 1 when x < c, else 0."""

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


class IndicatorKind(Kind):
    key = label = "indicator"
    cut_based = True
    dichotomises = True
    searched_df = 1  # the cut point
    search_note = NOTE_CUT

    def validate(self, params: Mapping[str, Any]) -> None:
        check_number(params, "cut")

    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        return (x < float(params["cut"])).astype(float)[:, None]

    def apply_many(self, params: Sequence[Mapping[str, Any]], x: np.ndarray) -> np.ndarray:
        cuts = np.array([float(p["cut"]) for p in params])
        return (x[None, :] < cuts[:, None]).astype(float)[:, :, None]

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return ["below"]

    def describe(self, params: Mapping[str, Any]) -> str:
        return f"indicator x < {float(params['cut']):.6g}"

    def words(self, params: Mapping[str, Any]) -> str:
        return f"indicator: 1 when x < {words_number(float(params['cut']))}, else 0"

    def shows_threshold(self, form_coef: np.ndarray) -> bool:
        return True  # a step is all an indicator can draw

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        return [f"CASE WHEN {x} < {sql_number(float(params['cut']))} THEN 1.0 ELSE 0.0 END"]


INDICATOR = IndicatorKind()


class IndicatorCandidate(Candidate):
    """Cut point searched over the central percentiles unless given by hand."""

    form = INDICATOR

    def __init__(self, cut: float | None = None) -> None:
        self.cut = cut

    @property
    def key(self) -> str:
        return INDICATOR.key if self.cut is None else f"{INDICATOR.key}@{float(self.cut)!r}"

    @property
    def searches_many_fits(self) -> bool:
        return self.cut is None

    @property
    def label(self) -> str:
        return INDICATOR.label if self.cut is None else f"indicator x < {self.cut:.6g}"

    def learn(self, counts: ReducedCounts) -> Learned:
        if self.cut is not None:
            return Learned(Recoding(INDICATOR, {"cut": float(self.cut)}))
        options = [Recoding(INDICATOR, {"cut": c}) for c in cut_candidates(counts)]
        if not options:
            raise RecodingError("too few distinct values to place a cut point")
        return learned_by_search(options, counts)

"""Threshold indicator: 1 when x < c, else 0 (side ``below``, the default and the meaning
of every log without a side), or 1 when x ≥ c (side ``above``), so that the coefficient
reads as the change in risk on the side the analyst cares about. Both sides fit alike."""

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

BELOW, ABOVE = "below", "above"
SIDES = (BELOW, ABOVE)
_SIGN = {BELOW: "<", ABOVE: "≥"}


def side_of(params: Mapping[str, Any]) -> str:
    """The side that reads 1; a log without one means ``below``."""
    return str(params.get("side", BELOW))


def side_params(cut: float, side: str) -> dict[str, Any]:
    """An indicator's params: ``side`` written only when it is ``above`` (so a log of the
    default side reads as every earlier log did)."""
    return {"cut": float(cut)} if side == BELOW else {"cut": float(cut), "side": side}


class IndicatorKind(Kind):
    key = label = "indicator"
    cut_based = True
    dichotomises = True
    searched_df = 1  # the cut point
    search_note = NOTE_CUT

    def validate(self, params: Mapping[str, Any]) -> None:
        check_number(params, "cut")
        if params.get("side", BELOW) not in SIDES:
            raise RecodingError('params.side must be "below" or "above"')

    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        cut = float(params["cut"])
        ones = x >= cut if side_of(params) == ABOVE else x < cut
        return ones.astype(float)[:, None]

    def apply_many(self, params: Sequence[Mapping[str, Any]], x: np.ndarray) -> np.ndarray:
        cuts = np.array([float(p["cut"]) for p in params])[:, None]
        above = np.array([side_of(p) == ABOVE for p in params])[:, None]
        ones = np.where(above, x[None, :] >= cuts, x[None, :] < cuts)
        return ones.astype(float)[:, :, None]

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return [side_of(params)]

    def describe(self, params: Mapping[str, Any]) -> str:
        return f"indicator x {_SIGN[side_of(params)]} {float(params['cut']):.6g}"

    def words(self, params: Mapping[str, Any]) -> str:
        sign, cut = _SIGN[side_of(params)], words_number(float(params["cut"]))
        return f"indicator: 1 when x {sign} {cut}, else 0"

    def shows_threshold(self, form_coef: np.ndarray) -> bool:
        return True  # a step is all an indicator can draw

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        sign = "<" if side_of(params) == BELOW else ">="
        return [f"CASE WHEN {x} {sign} {sql_number(float(params['cut']))} THEN 1.0 ELSE 0.0 END"]


INDICATOR = IndicatorKind()


class IndicatorCandidate(Candidate):
    """Cut point searched over the central percentiles unless given by hand."""

    form = INDICATOR

    def __init__(self, cut: float | None = None, side: str = BELOW) -> None:
        self.cut = cut
        self.side = side

    @property
    def key(self) -> str:
        return INDICATOR.key if self.cut is None else f"{INDICATOR.key}@{float(self.cut)!r}"

    @property
    def searches_many_fits(self) -> bool:
        return self.cut is None

    @property
    def label(self) -> str:
        if self.cut is None:
            return INDICATOR.label
        return f"indicator x {_SIGN[self.side]} {self.cut:.6g}"

    def search_options(self, counts: ReducedCounts) -> list[Recoding] | None:
        if self.cut is not None:
            return None
        return [Recoding(INDICATOR, side_params(c, self.side)) for c in cut_candidates(counts)]

    def learn(self, counts: ReducedCounts) -> Learned:
        if self.cut is not None:
            return Learned(Recoding(INDICATOR, side_params(self.cut, self.side)))
        options = self.search_options(counts) or []
        if not options:
            raise RecodingError("too few distinct values to place a cut point")
        return learned_by_search(options, counts)

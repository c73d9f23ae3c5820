"""Quadratic: x and x squared."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import numpy as np

from tui.engine.counts import ReducedCounts
from tui.engine.forms.base import Candidate, Kind, Learned, Recoding, RecodingError


class QuadraticKind(Kind):
    key = label = "quadratic"

    def nests_linear(self, params: Mapping[str, Any]) -> bool:
        return True

    def validate(self, params: Mapping[str, Any]) -> None:
        if params:
            raise RecodingError(f"params must be empty for quadratic, got {sorted(params)}")

    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        return np.column_stack([x, x * x])

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return ["lin", "sq"]

    def describe(self, params: Mapping[str, Any]) -> str:
        return "quadratic"

    def words(self, params: Mapping[str, Any]) -> str:
        return "x and x squared"

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        return [x, f"(({x}) * ({x}))"]


QUADRATIC = QuadraticKind()


class QuadraticCandidate(Candidate):
    form = QUADRATIC

    @property
    def label(self) -> str:
        return QUADRATIC.label

    def learn(self, counts: ReducedCounts) -> Learned:
        return Learned(Recoding(QUADRATIC, {}))

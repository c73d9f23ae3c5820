"""Quadratic: x and x squared."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import numpy as np

from tui.engine.counts import ReducedCounts
from tui.engine.forms.base import Candidate, Kind, Learned, Recoding, RecodingError


class QuadraticKind(Kind):
    name = "quadratic"

    def validate(self, params: Mapping[str, Any]) -> None:
        if params:
            raise RecodingError(f"params must be empty for quadratic, got {sorted(params)}")

    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        return np.column_stack([x, x * x])

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return ["lin", "sq"]

    def describe(self, params: Mapping[str, Any]) -> str:
        return "quadratic"

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        return [x, f"(({x}) * ({x}))"]


class QuadraticCandidate(Candidate):
    kind = "quadratic"
    nests_linear = True

    @property
    def label(self) -> str:
        return "quadratic"

    def learn(self, counts: ReducedCounts) -> Learned:
        return Learned(Recoding("quadratic", {}), df=2)

"""Linear: x itself (the decision to keep a predictor linear is a recoding too)."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import numpy as np

from tui.engine.counts import ReducedCounts
from tui.engine.forms.base import Candidate, Kind, Learned, Recoding, RecodingError


class LinearKind(Kind):
    key = label = "linear"

    def nests_linear(self, params: Mapping[str, Any]) -> bool:
        return True

    def validate(self, params: Mapping[str, Any]) -> None:
        if params:
            raise RecodingError(f"params must be empty for linear, got {sorted(params)}")

    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        return x[:, None]

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return ["lin"]

    def describe(self, params: Mapping[str, Any]) -> str:
        return "linear"

    def words(self, params: Mapping[str, Any]) -> str:
        return "kept as a linear term in x"

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        return [x]


LINEAR = LinearKind()


class LinearCandidate(Candidate):
    form = LINEAR

    @property
    def label(self) -> str:
        return LINEAR.label

    def learn(self, counts: ReducedCounts) -> Learned:
        return Learned(Recoding(LINEAR, {}))

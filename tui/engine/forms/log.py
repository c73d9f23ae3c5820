"""Log with shift: ln(x + s), s chosen so that the smallest training x maps above 0."""

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
    check_shift,
    sql_number,
    words_shift,
)
from tui.engine.forms.shift import learn_shift


def shifted_sql(x: str, shift: float) -> str:
    """x + s as SQL (x alone when s is 0)."""
    return f"({x})" if shift == 0 else f"(({x}) + {sql_number(shift)})"


def safe_log(z: np.ndarray) -> np.ndarray:
    """ln z, missing where z ≤ 0 (new data below the training range)."""
    pos = z > 0
    if pos.all():  # the usual case on training data: no masked copy
        return np.log(z)
    out = np.full(z.shape, np.nan)
    out[pos] = np.log(z[pos])
    return out


class LogKind(Kind):
    key = label = "log"

    def validate(self, params: Mapping[str, Any]) -> None:
        check_shift(params)

    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        return safe_log(x + float(params["shift"]))[:, None]

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return ["log"]

    def describe(self, params: Mapping[str, Any]) -> str:
        s = float(params["shift"])
        return "log" if s == 0 else f"log, shift {s:.6g}"

    def words(self, params: Mapping[str, Any]) -> str:
        return f"natural log of x{words_shift(params)}"

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        z = shifted_sql(x, float(params["shift"]))
        return [f"CASE WHEN {z} > 0 THEN LN({z}) END"]


LOG = LogKind()


class LogCandidate(Candidate):
    form = LOG

    @property
    def label(self) -> str:
        return LOG.label

    def learn(self, counts: ReducedCounts) -> Learned:
        return Learned(Recoding(LOG, {"shift": learn_shift(counts)}))

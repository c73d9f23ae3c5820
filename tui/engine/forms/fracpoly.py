"""Fractional polynomials of degree 1 and 2 (Royston & Altman 1994).

Powers come from S = {-2, -1, -0.5, 0, 0.5, 1, 2, 3}; power 0 means ln. A repeated
power p, p gives x^p and x^p ln x. FP1 counts 2 df and FP2 4 df, the power search
included.
"""

from __future__ import annotations

import itertools
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
    check_shift,
    search,
)
from tui.engine.forms.log import safe_log, shifted_sql
from tui.engine.forms.shift import learn_shift

POWERS = (-2.0, -1.0, -0.5, 0.0, 0.5, 1.0, 2.0, 3.0)


def fp_power(z: np.ndarray, p: float) -> np.ndarray:
    """z^p with p = 0 meaning ln z; missing where z ≤ 0."""
    if p == 0:
        return safe_log(z)
    out = np.full(z.shape, np.nan)
    pos = z > 0
    out[pos] = np.power(z[pos], p)
    return out


def _power_sql(z: str, p: float) -> str:
    if p == 0:
        return f"LN({z})"
    if p == 1:
        return z
    return f"POWER({z}, {p!r})"


def _check_power(value: Any, where: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float) or value not in POWERS:
        raise RecodingError(f"{where} must be one of {list(POWERS)}")
    return float(value)


class Fp1Kind(Kind):
    name = "fp1"

    def validate(self, params: Mapping[str, Any]) -> None:
        check_shift(params)
        if "power" not in params:
            raise RecodingError("params.power is missing")
        _check_power(params["power"], "params.power")

    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        return fp_power(x + float(params["shift"]), float(params["power"]))[:, None]

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return ["fp1"]

    def describe(self, params: Mapping[str, Any]) -> str:
        p = float(params["power"])
        text = f"FP1, power {p:g}" + (" (ln)" if p == 0 else "")
        s = float(params["shift"])
        return text if s == 0 else f"{text}, shift {s:.6g}"

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        z = shifted_sql(x, float(params["shift"]))
        return [f"CASE WHEN {z} > 0 THEN {_power_sql(z, float(params['power']))} END"]


class Fp2Kind(Kind):
    name = "fp2"

    def validate(self, params: Mapping[str, Any]) -> None:
        check_shift(params)
        powers = params.get("powers")
        if not isinstance(powers, list | tuple) or len(powers) != 2:
            raise RecodingError("params.powers must be a list of two powers")
        p1 = _check_power(powers[0], "params.powers[0]")
        p2 = _check_power(powers[1], "params.powers[1]")
        if p2 < p1:
            raise RecodingError("params.powers must be in increasing order")

    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        z = x + float(params["shift"])
        p1, p2 = (float(p) for p in params["powers"])
        first = fp_power(z, p1)
        second = first * safe_log(z) if p1 == p2 else fp_power(z, p2)
        return np.column_stack([first, second])

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return ["fp2a", "fp2b"]

    def describe(self, params: Mapping[str, Any]) -> str:
        p1, p2 = (float(p) for p in params["powers"])
        text = f"FP2, powers {p1:g}, {p2:g}"
        if p1 == p2:
            text += " (repeated: x^p, x^p ln x)" if p1 != 0 else " (repeated: ln x, ln² x)"
        s = float(params["shift"])
        return text if s == 0 else f"{text}, shift {s:.6g}"

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        z = shifted_sql(x, float(params["shift"]))
        p1, p2 = (float(p) for p in params["powers"])
        first = _power_sql(z, p1)
        second = f"({first}) * LN({z})" if p1 == p2 else _power_sql(z, p2)
        return [f"CASE WHEN {z} > 0 THEN {e} END" for e in (first, second)]


class Fp1Candidate(Candidate):
    kind = "fp1"
    nests_linear = True

    @property
    def label(self) -> str:
        return "FP1"

    def learn(self, counts: ReducedCounts) -> Learned:
        shift = learn_shift(counts)
        options = [Recoding("fp1", {"power": p, "shift": shift}) for p in POWERS]
        return Learned(search(options, counts), df=2, searched=True)


class Fp2Candidate(Candidate):
    kind = "fp2"
    nests_linear = True

    @property
    def label(self) -> str:
        return "FP2"

    def learn(self, counts: ReducedCounts) -> Learned:
        shift = learn_shift(counts)
        options = [
            Recoding("fp2", {"powers": [p1, p2], "shift": shift})
            for p1, p2 in itertools.combinations_with_replacement(POWERS, 2)
        ]
        return Learned(search(options, counts), df=4, searched=True)

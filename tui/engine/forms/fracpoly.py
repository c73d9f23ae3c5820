"""Fractional polynomials of degree 1 and 2 (Royston & Altman 1994).

Powers come from S = {-2, -1, -0.5, 0, 0.5, 1, 2, 3}; power 0 means ln. A repeated
power p, p gives x^p and x^p ln x. FP1 counts 2 df and FP2 4 df, the power search
included.
"""

from __future__ import annotations

import itertools
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from tui.engine.counts import ReducedCounts
from tui.engine.forms.base import (
    NOTE_POWER,
    Candidate,
    Kind,
    Learned,
    Recoding,
    RecodingError,
    check_shift,
    words_number,
    words_shift,
)
from tui.engine.forms.log import safe_log, shifted_sql
from tui.engine.forms.search import learned_by_search
from tui.engine.forms.shift import learn_shift

POWERS = (-2.0, -1.0, -0.5, 0.0, 0.5, 1.0, 2.0, 3.0)


def fp_power(z: np.ndarray, p: float) -> np.ndarray:
    """z^p with p = 0 meaning ln z; missing where z ≤ 0."""
    if p == 0:
        return safe_log(z)
    pos = z > 0
    if pos.all():  # the usual case on training data: no masked copy
        return np.power(z, p)
    out = np.full(z.shape, np.nan)
    out[pos] = np.power(z[pos], p)
    return out


def _powers_of(x: np.ndarray, params: Sequence[Mapping[str, Any]]) -> Any:
    """power(shift, p): fp_power(x + shift, p) (``"ln"``: safe_log(x + shift)), each
    computed once for a whole search; the same numbers as computing it member by member."""
    cache: dict[tuple[float, float | str], np.ndarray] = {}

    def power(shift: Any, p: float | str) -> np.ndarray:
        key = (float(shift), p if p == "ln" else float(p))
        if key not in cache:
            z = x + key[0]
            cache[key] = safe_log(z) if p == "ln" else fp_power(z, float(p))
        return cache[key]

    return power


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
    key, label = "fp1", "FP1"
    searched_df = 1  # the power
    search_note = NOTE_POWER
    search_includes_linear = True  # power 1 is in S

    def nests_linear(self, params: Mapping[str, Any]) -> bool:
        return float(params["power"]) == 1  # (x + s)^1 is x up to the intercept

    def validate(self, params: Mapping[str, Any]) -> None:
        check_shift(params)
        if "power" not in params:
            raise RecodingError("params.power is missing")
        _check_power(params["power"], "params.power")

    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        return fp_power(x + float(params["shift"]), float(params["power"]))[:, None]

    def apply_many(self, params: Sequence[Mapping[str, Any]], x: np.ndarray) -> np.ndarray:
        powers = _powers_of(x, params)
        return np.stack([powers(p["shift"], p["power"]) for p in params])[:, :, None]

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return ["fp1"]

    def describe(self, params: Mapping[str, Any]) -> str:
        p = float(params["power"])
        text = f"FP1, power {p:g}" + (" (ln)" if p == 0 else "")
        s = float(params["shift"])
        return text if s == 0 else f"{text}, shift {s:.6g}"

    def words(self, params: Mapping[str, Any]) -> str:
        power = float(params["power"])
        what = "ln x" if power == 0 else f"x to the power {words_number(power)}"
        return f"fractional polynomial of degree 1: {what}{words_shift(params)}"

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        z = shifted_sql(x, float(params["shift"]))
        return [f"CASE WHEN {z} > 0 THEN {_power_sql(z, float(params['power']))} END"]


class Fp2Kind(Kind):
    key, label = "fp2", "FP2"
    searched_df = 2  # the two powers
    search_note = NOTE_POWER
    search_includes_linear = True  # powers (1, p) are in the search

    def nests_linear(self, params: Mapping[str, Any]) -> bool:
        # (p, p) gives z^p and z^p ln z, so x is an output exactly when 1 is a power.
        return 1 in (float(p) for p in params["powers"])

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

    def apply_many(self, params: Sequence[Mapping[str, Any]], x: np.ndarray) -> np.ndarray:
        powers = _powers_of(x, params)
        # Each member's outputs one after the other in memory (a transposed view is
        # returned): contiguous rows to write here and to copy into the stacked designs.
        out = np.empty((len(params), 2, x.size))
        for i, p in enumerate(params):
            p1, p2 = (float(v) for v in p["powers"])
            out[i, 0] = first = powers(p["shift"], p1)
            if p1 == p2:
                np.multiply(first, powers(p["shift"], "ln"), out=out[i, 1])
            else:
                out[i, 1] = powers(p["shift"], p2)
        return out.transpose(0, 2, 1)

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return ["fp2a", "fp2b"]

    def describe(self, params: Mapping[str, Any]) -> str:
        p1, p2 = (float(p) for p in params["powers"])
        text = f"FP2, powers {p1:g}, {p2:g}"
        if p1 == p2:
            text += " (repeated: x^p, x^p ln x)" if p1 != 0 else " (repeated: ln x, ln² x)"
        s = float(params["shift"])
        return text if s == 0 else f"{text}, shift {s:.6g}"

    def words(self, params: Mapping[str, Any]) -> str:
        p1, p2 = (float(v) for v in params["powers"])
        if p1 == p2:
            base = "ln x" if p1 == 0 else f"x^{words_number(p1)}"
            what = f"{base} and {base}·ln x (repeated power)"
        else:
            what = " and ".join("ln x" if q == 0 else f"x^{words_number(q)}" for q in (p1, p2))
        return f"fractional polynomial of degree 2: {what}{words_shift(params)}"

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        z = shifted_sql(x, float(params["shift"]))
        p1, p2 = (float(p) for p in params["powers"])
        first = _power_sql(z, p1)
        second = f"({first}) * LN({z})" if p1 == p2 else _power_sql(z, p2)
        return [f"CASE WHEN {z} > 0 THEN {e} END" for e in (first, second)]


FP1 = Fp1Kind()
FP2 = Fp2Kind()


class Fp1Candidate(Candidate):
    form = FP1

    @property
    def label(self) -> str:
        return FP1.label

    def search_options(self, counts: ReducedCounts) -> list[Recoding]:
        shift = learn_shift(counts)
        return [Recoding(FP1, {"power": p, "shift": shift}) for p in POWERS]

    def learn(self, counts: ReducedCounts) -> Learned:
        return learned_by_search(self.search_options(counts), counts)


class Fp2Candidate(Candidate):
    form = FP2

    @property
    def searches_many_fits(self) -> bool:
        return True  # 36 pairs of powers

    @property
    def label(self) -> str:
        return FP2.label

    def search_options(self, counts: ReducedCounts) -> list[Recoding]:
        shift = learn_shift(counts)
        return [
            Recoding(FP2, {"powers": [p1, p2], "shift": shift})
            for p1, p2 in itertools.combinations_with_replacement(POWERS, 2)
        ]

    def learn(self, counts: ReducedCounts) -> Learned:
        return learned_by_search(self.search_options(counts), counts)

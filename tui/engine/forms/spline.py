"""Restricted (natural) cubic spline with k knots (Stone & Koo 1985; Harrell 2015).

Linear beyond the outer knots, and evaluated that way (see ``spline_basis``). Outputs: x,
then k - 2 non-linear columns
[(x-t_j)+^3 - (x-t_{k-1})+^3 (t_k-t_j)/(t_k-t_{k-1}) + (x-t_k)+^3 (t_{k-1}-t_j)/(t_k-t_{k-1})]
/ (t_k-t_1)^2, j = 1..k-2. Knots sit at fixed percentiles of x (Harrell 2015, §2.4.6).
"""

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
    check_sorted_numbers,
    sql_number,
    words_list,
)

KNOT_PERCENTILES: dict[int, tuple[float, ...]] = {
    3: (0.10, 0.50, 0.90),
    4: (0.05, 0.35, 0.65, 0.95),
    5: (0.05, 0.275, 0.50, 0.725, 0.95),
    6: (0.05, 0.23, 0.41, 0.59, 0.77, 0.95),
    7: (0.025, 0.1833, 0.3417, 0.50, 0.6583, 0.8167, 0.975),
}
DEFAULT_KNOTS = 4
SPLINE_SUFFIX = "spl"
"""Suffix of the non-linear outputs (``<column>__spl1``, ...). Logs written with other names
(an older bendwise wrote ``rcs1``, ...) keep them: outputs are stored per recoding."""


def spline_basis(x: np.ndarray, knots: list[float] | np.ndarray) -> np.ndarray:
    """x and the k - 2 restricted cubic columns (rows × (k - 1)).

    Each column is evaluated piece by piece so that no two large cubes cancel: below
    t_{k-1} only (x - t_j)+^3 terms appear, bounded by (t_k - t_1)^3; beyond the last knot the
    column is exactly linear, (t_k - t_j)(t_{k-1} - t_j)(2 t_k - t_j - t_{k-1} + 3 (x - t_k)),
    the cubic and quadratic parts of the published formula cancelling in closed form (the
    subtraction of cubes leaves an error of order x^3 times machine precision). All is
    divided by (t_k - t_1)^2, cubes as (t_k - t_1) ((x - t) / (t_k - t_1))^3, so that values
    near 1e200 neither overflow nor cancel.
    """
    t = np.asarray(knots, dtype=float)
    k = t.size
    span = t[-1] - t[0]
    last, penult = t[-1], t[-2]
    beyond = x >= last
    # Inside pieces only see x up to the last knot (rows beyond it take the tail, so their
    # inside values are never read).
    xin = np.minimum(x, last)

    def cube(c: float) -> np.ndarray:
        u = np.subtract(xin, c)
        np.maximum(np.divide(u, span, out=u), 0.0, out=u)
        cubed = u * u  # two products: numpy's ** 3 calls pow, several times slower
        return np.multiply(cubed, u, out=cubed)

    # Terms the columns share are formed once, and each step writes over its own
    # temporary: the same numbers as the formula taken step by step per column.
    top = cube(penult)
    run = 3.0 * (x - last)
    out = np.empty((x.size, k - 1))
    out[:, 0] = x
    for j in range(k - 2):
        inside = cube(t[j])
        share = top * (last - t[j])
        inside -= np.divide(share, last - penult, out=share)
        inside *= span
        tail = np.add(2.0 * last - t[j] - penult, run)
        tail *= (last - t[j]) / span * (penult - t[j]) / span
        out[:, j + 1] = np.where(beyond, tail, inside)
    return out


def learn_knots(counts: ReducedCounts, k: int) -> list[float]:
    """Knots at the tabulated percentiles; fails when fewer than 3 distinct knots result."""
    if k not in KNOT_PERCENTILES:
        raise RecodingError(f"a spline takes 3 to 7 knots, not {k}")
    return knots_at(counts.quantile(KNOT_PERCENTILES[k]), k)


def knots_at(quantiles: np.ndarray, k: int) -> list[float]:
    """The distinct knots among the quantiles at ``KNOT_PERCENTILES[k]``, ascending."""
    values = quantiles.tolist()
    if all(a < b for a, b in zip(values[:-1], values[1:], strict=True)):
        knots = values  # already distinct and ascending: what np.unique would return
    else:
        knots = [float(v) for v in np.unique(quantiles)]
    if len(knots) < 3:
        raise RecodingError(f"too few distinct values for a {k}-knot spline")
    return knots


def tied_knots_note(got: int, asked: int) -> str:
    """Said wherever a spline's knots are shown when tied quantiles merged some."""
    return f"{got} knots: {asked} asked, tied quantiles"


class SplineKind(Kind):
    key = label = "spline"

    def nests_linear(self, params: Mapping[str, Any]) -> bool:
        return True  # x is the first output

    def validate(self, params: Mapping[str, Any]) -> None:
        knots = check_sorted_numbers(params, "knots", 3)
        if len(knots) > 7:
            raise RecodingError("params.knots must hold 3 to 7 knots")

    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        return spline_basis(x, params["knots"])

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return ["lin"] + [f"{SPLINE_SUFFIX}{j}" for j in range(1, len(params["knots"]) - 1)]

    def describe(self, params: Mapping[str, Any]) -> str:
        return f"spline, {len(params['knots'])} knots"

    def words(self, params: Mapping[str, Any]) -> str:
        knots = params["knots"]
        return f"restricted cubic spline with {len(knots)} knots at {words_list(knots)}"

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        t = [float(v) for v in params["knots"]]
        last, penult = t[-1], t[-2]
        span = sql_number(last - t[0])
        top = sql_number(last)

        def cube(c: float) -> str:  # the same scaled cube as spline_basis
            return f"POWER(GREATEST(({x} - {sql_number(c)}) / {span}, 0.0), 3)"

        out = [x]
        for j in range(len(t) - 2):
            a = sql_number((last - t[j]) / (last - penult))
            # Beyond the last knot the column is linear (see spline_basis): no cubes cancel.
            slope = sql_number(
                3.0 * (last - t[j]) / (last - t[0]) * (penult - t[j]) / (last - t[0])
            )
            at_top = sql_number(
                (last - t[j])
                / (last - t[0])
                * (penult - t[j])
                / (last - t[0])
                * (2 * last - t[j] - penult)
            )
            inside = f"(({cube(t[j])} - {cube(penult)} * {a}) * {span})"
            tail = f"{at_top} + {slope} * ({x} - {top})"
            out.append(f"(CASE WHEN {x} >= {top} THEN {tail} ELSE {inside} END)")
        return out


SPLINE = SplineKind()


class SplineCandidate(Candidate):
    form = SPLINE

    def __init__(self, knots: int = DEFAULT_KNOTS) -> None:
        self.knots = knots

    @property
    def label(self) -> str:
        return f"{SPLINE.label}, {self.knots} knots"

    def learn(self, counts: ReducedCounts) -> Learned:
        return self.learn_at(None, counts)

    def learn_at(self, quantiles: np.ndarray | None, counts: ReducedCounts) -> Learned:
        """``learn``, from the counts' quantiles at ``KNOT_PERCENTILES[self.knots]`` when
        they are already taken (None: taken here)."""
        if quantiles is None:
            knots = learn_knots(counts, self.knots)
        else:
            knots = knots_at(quantiles, self.knots)
        remarks = () if len(knots) == self.knots else (tied_knots_note(len(knots), self.knots),)
        return Learned(Recoding(SPLINE, {"knots": knots}), remarks=remarks)

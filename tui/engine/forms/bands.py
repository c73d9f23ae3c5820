"""Quantile bands as categories: band j holds x with exactly j cut points ≤ x.

The lowest band is the reference, so m cut points give m indicator columns.
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
from tui.engine.groups import group_edges, group_index

NOTE_BANDS = "bands assume a flat risk within each band and steps between them"


def band_edges(counts: ReducedCounts, groups: int) -> list[float]:
    """Cut points that put the training rows into the same bands as the quantile groups:
    halfway between the largest x of one group and the smallest x of the next."""
    which = group_index(group_edges(counts, groups), counts.x)
    cuts = []
    for g in range(1, int(which.max(initial=0)) + 1):
        below, above = counts.x[which < g], counts.x[which >= g]
        if below.size and above.size:
            cuts.append(float((below[-1] + above[0]) / 2))
    return cuts


class BandsKind(Kind):
    key = label = "bands"
    cut_based = True  # several groups, not a dichotomy

    def notes(self, searched: bool) -> list[str]:
        # Several groups are not a dichotomy, but they too lose what varies within a band.
        return [NOTE_BANDS]

    def validate(self, params: Mapping[str, Any]) -> None:
        check_sorted_numbers(params, "edges", 1)

    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        edges = np.asarray(params["edges"], dtype=float)
        above = np.searchsorted(edges, x, side="right")  # cut points ≤ x
        return (above[:, None] == np.arange(1, edges.size + 1)[None, :]).astype(float)

    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        return [f"band{j}" for j in range(1, len(params["edges"]) + 1)]

    def describe(self, params: Mapping[str, Any]) -> str:
        return f"bands, {len(params['edges']) + 1} groups"

    def words(self, params: Mapping[str, Any]) -> str:
        edges = params["edges"]
        return (
            f"{len(edges) + 1} bands cut at {words_list(edges)}; the lowest band is the reference"
        )

    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        edges = [sql_number(float(e)) for e in params["edges"]]
        out = []
        for j, lo in enumerate(edges):
            upper = f" AND {x} < {edges[j + 1]}" if j + 1 < len(edges) else ""
            out.append(f"CASE WHEN {x} >= {lo}{upper} THEN 1.0 ELSE 0.0 END")
        return out


BANDS = BandsKind()


class BandsCandidate(Candidate):
    form = BANDS

    def __init__(self, groups: int = 4) -> None:
        self.groups = groups

    @property
    def label(self) -> str:
        return f"{BANDS.label}, {self.groups} groups"

    def learn(self, counts: ReducedCounts) -> Learned:
        edges = band_edges(counts, self.groups)
        if not edges:
            raise RecodingError("too few distinct values for quantile bands")
        return Learned(Recoding(BANDS, {"edges": edges}))

"""What a column's fits carry besides the column: covariates (in the forms they entered in)
and row weights, as a key the screens and the fit cache can share.

A score and the candidate table of the same column must come from the same design, so both
are asked for by the same ``Basis``. Each basis is built into the engine's ``Adjustment``
once (from the data and the forms the log held at that moment) and kept: a decision changed
later does not change the fits already shown, only the next re-score.
"""

from __future__ import annotations

import json
import threading
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from tui.engine.adjust import Adjustment, Source, open_adjustment
from tui.engine.forms.base import Recoding
from tui.intake.weights import FREQUENCY


@dataclass(frozen=True)
class Basis:
    """Covariates and weights of a set of fits (hashable: part of the fit cache's keys)."""

    covariates: tuple[str, ...] = ()
    """Covariate columns, in the order they enter."""
    forms: tuple[tuple[str, str], ...] = ()
    """(covariate, its accepted form as canonical text) for covariates not entered linearly."""
    weight: str | None = None
    """Weight column, if any."""
    weight_kind: str | None = None
    """``frequency`` or ``survey`` (None without weights)."""

    @property
    def plain(self) -> bool:
        """One column at a time, unweighted."""
        return not self.covariates and self.weight is None

    def adjusted_for(self, column: str) -> tuple[str, ...]:
        """The covariates in this column's fits: a column is never adjusted for itself."""
        return tuple(c for c in self.covariates if c != column)


def form_key(recoding: Recoding) -> str:
    """A recoding as canonical text: equal recodings give equal text."""

    def plain(value: Any) -> Any:
        return value.tolist() if hasattr(value, "tolist") else str(value)

    content = {"kind": recoding.kind, "params": dict(recoding.params), "clip": recoding.clip}
    return json.dumps(content, sort_keys=True, default=plain)


class Adjustments:
    """Builds the engine's ``Adjustment`` of each basis once; safe across threads."""

    def __init__(
        self, data: Source, outcome: str, weight: str | None, weight_kind: str | None
    ) -> None:
        self._data = data
        self._outcome = outcome
        self._weight = weight
        self._kind = weight_kind if weight else None
        self._lock = threading.Lock()
        self._built: dict[Basis, Adjustment | None] = {Basis(): None}

    def basis(self, covariates: Sequence[str], forms: Mapping[str, Recoding]) -> Basis:
        """The basis of these covariates (each in its form from ``forms`` when it has one)
        and the session's weights, built now. Raises InputProblem for a covariate or weight
        column that cannot enter the model."""
        names = tuple(dict.fromkeys(covariates))  # once each, first place kept
        used = {n: forms[n] for n in names if n in forms and not _plain_linear(forms[n])}
        key = Basis(
            names,
            tuple((n, form_key(r)) for n, r in used.items()),
            self._weight,
            self._kind,
        )
        with self._lock:
            if key in self._built:
                return key
        built = open_adjustment(
            self._data, self._outcome, names, self._weight, self._kind or FREQUENCY, used
        )
        with self._lock:
            self._built[key] = built
        return key

    def of(self, basis: Basis) -> Adjustment | None:
        """The adjustment built for ``basis`` (None for a plain one)."""
        with self._lock:
            return self._built[basis]


def _plain_linear(recoding: Recoding) -> bool:
    """Kept linear without a clip: the covariate enters as it is."""
    return recoding.kind == "linear" and recoding.clip is None

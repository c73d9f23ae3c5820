"""Turn ``--adjust`` and ``--weight`` into the covariates and weights every fit carries."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Protocol

import numpy as np
import pandas as pd

from tui.engine.adjust import Adjustment
from tui.engine.covariates import CovariateError, build_covariates
from tui.engine.forms.base import Recoding
from tui.intake.errors import InputProblem, closest_names
from tui.intake.profile import is_numeric_column, numeric_values
from tui.intake.weights import FREQUENCY, check_weights


class Source(Protocol):
    """What a dataset offers (both the whole-file and the column-at-a-time kinds)."""

    @property
    def columns(self) -> list[str]: ...
    @property
    def column_names(self) -> list[str]: ...
    def values(self, column: str) -> np.ndarray: ...
    def series(self, column: str) -> pd.Series: ...


def _check_names(data: Source, names: Sequence[str], outcome: str, what: str) -> None:
    unknown = [n for n in names if n not in data.column_names]
    if unknown:
        hints = "; ".join(
            f"{n!r} (closest: {', '.join(closest_names(n, data.column_names)) or 'none'})"
            for n in unknown
        )
        raise InputProblem(f"{what} not found: {hints}")
    if outcome in names:
        raise InputProblem(f"the outcome {outcome!r} cannot be used in {what}")


def open_adjustment(
    data: Source,
    outcome: str,
    adjust: Sequence[str] = (),
    weight: str | None = None,
    weight_kind: str = FREQUENCY,
    forms: Mapping[str, Recoding] | None = None,
) -> Adjustment | None:
    """Covariates (accepted forms from ``forms``) and weights; None when neither is asked."""
    if not adjust and not weight:
        return None
    _check_names(data, list(adjust), outcome, "adjustment column(s)")
    if weight and weight in adjust:
        raise InputProblem(f"{weight!r} cannot be both a weight and an adjustment column")
    design = None
    if adjust:
        # Numeric by the values themselves: an excluded column is still a usable covariate.
        series = {n: data.series(n) for n in adjust}
        numeric = {n: numeric_values(v) for n, v in series.items() if is_numeric_column(v)}
        text = {n: v.to_numpy(dtype=object) for n, v in series.items() if n not in numeric}
        try:
            design = build_covariates(list(adjust), numeric, text, forms or {})
        except CovariateError as problem:
            raise InputProblem(str(problem)) from None
    values = None
    if weight:
        _check_names(data, [weight], outcome, "weight column")
        checked = check_weights(data.series(weight), weight, weight_kind)
        values = np.zeros(checked.keep.size)
        values[checked.keep] = checked.values  # zero weight: the row drops out of every fit
    return Adjustment(design, values, weight, weight_kind if weight else None)

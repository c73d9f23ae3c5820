"""What every fit of an adjusted or weighted check carries besides the column itself, and
how ``--adjust`` and ``--weight`` are turned into it.

Data flow one way: the columns and weights are read and checked by intake, then built into
design columns here; intake itself never imports the engine.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Protocol

import numpy as np

from tui.engine.covariates import CovariateDesign, CovariateError, build_covariates
from tui.engine.forms.base import Recoding
from tui.intake.profile import is_numeric_column, numeric_values
from tui.intake.weights import FREQUENCY, check_weights
from tui.names import closest_names
from tui.problems import InputProblem

if TYPE_CHECKING:
    import pandas as pd


@dataclass(frozen=True, eq=False)
class Adjustment:
    """Fixed covariates and/or row weights, aligned with the data rows."""

    covariates: CovariateDesign | None = None
    """Covariate design columns; None for one column at a time."""
    weights: np.ndarray | None = None
    """Row weights (zero drops the row); None for unweighted."""
    weight_column: str | None = None
    """Name of the weight column."""
    weight_kind: str | None = None
    """``frequency`` or ``survey``."""

    def weights_over(self, used: np.ndarray) -> np.ndarray | None:
        """Row weights for the fits of one column, over the rows ``used`` by it.

        Survey weights say how much each row counts relative to the others, so they are
        rescaled to average 1 over the column's own rows (the number of observations stays
        its number of rows, whichever rows it is missing); frequency weights are counts and
        stay as they are.
        """
        if self.weights is None or self.weight_kind != "survey" or not used.any():
            return self.weights
        scaled = self.weights.copy()
        scaled[used] = scaled[used] / scaled[used].mean()
        return scaled

    def covariates_for(self, column: str) -> CovariateDesign | None:
        """The covariates for one column: never the column itself; None when none remain."""
        if self.covariates is None:
            return None
        design = self.covariates.without(column)
        return design if design.names else None

    def adjusted_for(self, column: str) -> tuple[str, ...]:
        """Names of the covariates in this column's fits."""
        design = self.covariates_for(column)
        return () if design is None else design.names

    def describe(self, column: str | None = None) -> str:
        """In words, for screens and evidence: e.g. ``adjusted for age (linear); weights w``."""
        parts = []
        design = self.covariates if column is None else self.covariates_for(column)
        if design is not None:
            parts.append("adjusted for " + ", ".join(design.described))
        if self.weight_column:
            parts.append(f"{self.weight_kind} weights {self.weight_column}")
        return "; ".join(parts) if parts else "unadjusted"


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
    if not hasattr(data, "series"):  # counts reduced in an engine: no rows to adjust with
        raise InputProblem(
            f"covariates and weights need rows, which a review of {data.label} keeps in "
            "its engine; start the review with --adjust (rows fetched under --row-cap)"
        )
    _check_names(data, list(adjust), outcome, "adjustment column(s)")
    if weight and weight in adjust:
        raise InputProblem(f"{weight!r} cannot be both a weight and an adjustment column")
    design = None
    if adjust:
        # Numeric by the values themselves: an excluded column is still a usable covariate.
        # Numbers stored in Parquet come without pandas (a quarter second saved).
        stored = getattr(data, "stored_floats", None)
        numeric = {n: v for n in adjust if stored and (v := stored(n)) is not None}
        series = {n: data.series(n) for n in adjust if n not in numeric}
        numeric |= {n: numeric_values(v) for n, v in series.items() if is_numeric_column(v)}
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

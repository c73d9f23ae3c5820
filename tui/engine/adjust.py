"""What every fit of an adjusted or weighted check carries besides the column itself."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tui.engine.covariates import CovariateDesign


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

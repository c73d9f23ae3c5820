"""The two fits of a scan's first pass (linear and the scoring spline) and the spline's
log-odds curve for the shape hint, with as few array passes as give the same numbers.

The knots and the ends of the shape hint's grid are quantiles of the same counts, taken
in one call; the spline's outputs on the counts' x and on the grid are formed in one
evaluation (each output depends on its own x alone), and the design and the grid's
outputs are cut from it. The rows and the hint are the numbers ``fit_candidate`` and
``FormFit.log_odds`` give.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from tui.engine.compare import ComparisonTable, FormFit, fit_candidate
from tui.engine.counts import ReducedCounts
from tui.engine.forms.base import Candidate, RecodingError
from tui.engine.forms.linear import LinearCandidate
from tui.engine.forms.spline import KNOT_PERCENTILES, SPLINE, SplineCandidate, spline_basis

SHAPE_ENDS = (0.025, 0.975)
"""Quantiles of x that bound the grid the shape hint reads the spline on."""
SHAPE_POINTS = 201
"""Points of that grid."""


@dataclass(frozen=True)
class CurveGrid:
    """The shape hint's grid and the spline's outputs on it (rows × outputs)."""

    grid: np.ndarray
    basis: np.ndarray

    def log_odds(self, row: FormFit) -> np.ndarray:
        """``row.log_odds(self.grid)`` from the outputs formed already."""
        return row.fit.coef[0] + row.covariate_level + self.basis @ row.form_coef  # type: ignore[union-attr]


def shape_grid(lo: float, hi: float) -> np.ndarray:
    """The grid the shape hint reads a fitted curve on."""
    return np.linspace(lo, hi, SHAPE_POINTS)


def first_table(
    candidates: Sequence[Candidate], counts: ReducedCounts
) -> tuple[ComparisonTable, CurveGrid | None]:
    """Linear (the first candidate) and every spline candidate fitted, and the first
    spline's outputs on the shape hint's grid (None: form them from the row)."""
    x = counts.x
    plain = counts.covariates is None and x.ndim == 1 and bool(np.isfinite(x).all())
    first = candidates[0]
    design = np.column_stack([np.ones(x.size), x]) if plain and _is_linear(first) else None
    linear = fit_candidate(first, counts, design=design)
    rows = [linear]
    curve = None
    for candidate in candidates:
        if candidate.kind != SPLINE.key:
            continue
        row, on_grid = _spline_row(candidate, counts, linear, plain)
        curve = on_grid if len(rows) == 1 else curve
        rows.append(row)
    return ComparisonTable(tuple(rows), None), curve


def _is_linear(candidate: Candidate) -> bool:
    """The plain linear candidate, whose ``design_matrix`` is the intercept and x."""
    return isinstance(candidate, LinearCandidate)


def _spline_row(
    candidate: Candidate, counts: ReducedCounts, linear: FormFit, plain: bool
) -> tuple[FormFit, CurveGrid | None]:
    """``plain``: the counts' x is 1-D and finite, with no covariates beside it."""
    probs = KNOT_PERCENTILES.get(getattr(candidate, "knots", 0))
    x = counts.x
    if not isinstance(candidate, SplineCandidate) or probs is None or not plain:
        return fit_candidate(candidate, counts, linear), None
    quantiles = counts.quantile([*probs, *SHAPE_ENDS])
    try:
        learned = candidate.learn_at(quantiles[: len(probs)], counts)
    except RecodingError:
        return fit_candidate(candidate, counts, linear), None  # the row says why
    grid = shape_grid(quantiles[-2], quantiles[-1])
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        basis = spline_basis(np.concatenate([x, grid]), learned.recoding.params["knots"])
    design = np.column_stack([np.ones(x.size), basis[: x.size]])
    row = fit_candidate(candidate, counts, linear, learned, design)
    return row, CurveGrid(grid, basis[x.size :].copy())

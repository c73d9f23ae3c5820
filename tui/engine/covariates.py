"""The fixed covariates of an adjusted check, as design columns.

A numeric covariate enters linearly, or through its accepted recoding when one is given;
a text covariate with few levels enters as 0/1 indicators (first level in sorted order is the
reference). Rows where any covariate is missing are left out of adjusted fits.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from tui.engine.forms.base import Recoding

MAX_TEXT_LEVELS = 10
"""A text covariate with more levels than this is refused (too many indicators to be sensible)."""


class CovariateError(ValueError):
    """A covariate that cannot enter the model (the message names it)."""


@dataclass(frozen=True)
class CovariateDesign:
    """Design columns for the covariates, aligned with the data rows."""

    names: tuple[str, ...]
    """Covariates as requested."""
    labels: tuple[str, ...]
    """One label per design column, e.g. ``bmi__sq`` or ``ward=surgical``."""
    matrix: np.ndarray
    """Rows × design columns; NaN where a covariate is missing."""
    described: tuple[str, ...]
    """How each covariate entered, in words (for evidence and screens)."""

    @property
    def complete(self) -> np.ndarray:
        """Rows where every covariate is present."""
        return np.all(np.isfinite(self.matrix), axis=1)

    def without(self, column: str) -> CovariateDesign:
        """The design minus one covariate (a column is never adjusted for itself)."""
        if column not in self.names:
            return self
        keep = [i for i, lab in enumerate(self.labels) if _owner(lab) != column]
        return CovariateDesign(
            tuple(n for n in self.names if n != column),
            tuple(self.labels[i] for i in keep),
            self.matrix[:, keep],
            tuple(d for d, n in zip(self.described, self.names, strict=True) if n != column),
        )


def _owner(label: str) -> str:
    return label.split("__", 1)[0].split("=", 1)[0]


def text_indicators(name: str, values: np.ndarray) -> tuple[list[str], np.ndarray, str]:
    """0/1 columns for every level but the first; missing text gives NaN."""
    present = np.array([v is not None and v == v and str(v) != "" for v in values])
    levels = sorted({str(v) for v, p in zip(values, present, strict=True) if p})
    if len(levels) < 2:
        raise CovariateError(f"covariate {name!r} has fewer than two levels")
    if len(levels) > MAX_TEXT_LEVELS:
        raise CovariateError(
            f"covariate {name!r} is text with {len(levels)} levels; at most {MAX_TEXT_LEVELS} "
            "are turned into indicators"
        )
    text = np.array([str(v) for v in values], dtype=object)
    cols = []
    for level in levels[1:]:
        col = (text == level).astype(float)
        col[~present] = np.nan
        cols.append(col)
    labels = [f"{name}={level}" for level in levels[1:]]
    return labels, np.column_stack(cols), f"{name} (indicators, reference {levels[0]!r})"


def build_covariates(
    names: Sequence[str],
    numeric: Mapping[str, np.ndarray],
    text: Mapping[str, np.ndarray],
    forms: Mapping[str, Recoding] | None = None,
) -> CovariateDesign:
    """Design columns for ``names``; each must be in ``numeric`` or ``text``."""
    forms = forms or {}
    labels: list[str] = []
    blocks: list[np.ndarray] = []
    described: list[str] = []
    rows = next(iter({**numeric, **text}.values())).size if (numeric or text) else 0
    for name in names:
        if name in numeric:
            values = np.asarray(numeric[name], dtype=float)
            values = np.where(np.isfinite(values), values, np.nan)
            if np.unique(values[np.isfinite(values)]).size < 2:
                raise CovariateError(f"covariate {name!r} is constant: it cannot adjust anything")
            recoding = forms.get(name)
            if recoding is None:
                labels.append(name)
                blocks.append(values[:, None])
                described.append(f"{name} (linear)")
            else:
                blocks.append(recoding.apply(values))
                labels += recoding.outputs(name)
                described.append(f"{name} ({recoding.describe()})")
        elif name in text:
            col_labels, block, words = text_indicators(name, np.asarray(text[name], dtype=object))
            labels += col_labels
            blocks.append(block)
            described.append(words)
        else:
            raise CovariateError(f"covariate {name!r} is not a column of the data")
    matrix = np.column_stack(blocks) if blocks else np.zeros((rows, 0))
    return CovariateDesign(tuple(names), tuple(labels), matrix, tuple(described))

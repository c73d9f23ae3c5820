"""One column's candidate table as plain records, for ``bendwise forms`` and scripts."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from tui.engine.column_fits import CandidateSet, Fitted, fit_column
from tui.engine.compare import FormFit
from tui.engine.counts import ReducedCounts
from tui.engine.stability import SelectionShares, selection_shares


@dataclass(frozen=True)
class FormsListing:
    """The candidate table of one column, with its bootstrap shares when asked for."""

    fitted: Fitted
    """The fits (``column_fits.fit_column``)."""
    wanted: CandidateSet
    """The candidates fitted."""
    shares: SelectionShares | None
    """Bootstrap selection shares; None when not asked for (or not available)."""

    def records(self) -> list[dict[str, Any]]:
        """One JSON-ready record per candidate row, in table order."""
        rows = self.fitted.table.rows if self.fitted.table is not None else ()
        return [_record(r, self.shares) for r in rows]

    def labels(self) -> dict[str, str]:
        """Row key to display label (the learned form in words)."""
        rows = self.fitted.table.rows if self.fitted.table is not None else ()
        return {r.key: form_words(r) for r in rows}


def form_words(row: FormFit) -> str:
    """The learned form in words, the candidate's label when nothing was learned."""
    return row.recoding.describe() if row.recoding is not None else row.label


def _number(value: float | None) -> float | None:
    return None if value is None or not math.isfinite(value) else float(value)


def _record(row: FormFit, shares: SelectionShares | None) -> dict[str, Any]:
    return {
        "form": form_words(row),
        "kind": row.kind,
        "params": dict(row.recoding.params) if row.recoding is not None else None,
        "df": int(row.df) if row.recoding is not None else None,
        "deviance": _number(row.deviance),
        "aic": _number(row.aic),
        "delta_aic": _number(row.delta_aic),
        "lr_p": _number(row.lr_p),
        "status": row.status,
        "notes": list(row.notes),
        "share": None if shares is None else shares.share(row.key),
    }


def list_forms(
    counts: ReducedCounts, wanted: CandidateSet, resamples: int | None = None, seed: int = 0
) -> FormsListing:
    """Fit the candidates of ``wanted`` and, with ``resamples``, their bootstrap shares."""
    fitted = fit_column(counts, wanted, smooth=False)
    shares = None
    if resamples and fitted.table is not None and fitted.problem is None:
        shares = selection_shares(counts, fitted.table, wanted.candidates(), resamples, seed)
    return FormsListing(fitted, wanted, shares)

"""How stable the choice of form is: bootstrap model-selection frequencies.

Resample the rows B times and, in each resample, pick the candidate with the lowest AIC,
searched parameters counted in the df as in the comparison table; the share of resamples
each candidate wins says how firmly the data choose it (Sauerbrei & Schumacher 1992, for
variable selection; the bootstrap itself: Efron & Tibshirani 1993).

On reduced counts a resample of rows is a multinomial draw of the same total over the cells
(events and non-events at each x value or bin), so no row is touched again. In each
resample the searched forms are searched again (FP powers, the hinge knot, the indicator's
cut point, by likelihood over the same options as on the whole data). Numbers placed by a
fixed rule rather than a search (spline knots and band edges at quantiles, the grid of cut
points searched, the shift of log and power forms) stay where the whole data put them.
Weighted counts are resampled as rows of their average weight. Adjusted checks keep every
row with its covariates, so they are not resampled here.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from tui.engine.compare import ComparisonTable
from tui.engine.counts import ReducedCounts
from tui.engine.fitting import fit_logistic, one_blas_thread
from tui.engine.forms.base import Candidate, Recoding, design_matrix
from tui.engine.resample_fit import fit_stacked

DEFAULT_RESAMPLES = 200
"""Resamples unless asked otherwise."""
DEFAULT_SEED = 0
"""Seed of the resampling unless asked otherwise (recorded with the shares)."""
METHOD = "Sauerbrei & Schumacher 1992"
"""Where the method comes from, named beside the shares."""


@dataclass(frozen=True)
class SelectionShares:
    """How often each candidate had the lowest AIC across resamples."""

    shares: dict[str, float]
    """Share of usable resamples won, by row key (``FormFit.key``); they sum to 1."""
    resamples: int
    """Resamples drawn."""
    seed: int
    """Seed of the random draws."""
    usable: int
    """Resamples in which at least one candidate could be fitted (the shares' base)."""

    def share(self, key: str) -> float:
        """The share won by the row with this key (0 when it never won)."""
        return self.shares.get(key, 0.0)

    def leaders(self, labels: dict[str, str], top: int = 2) -> str:
        """e.g. ``quadratic lowest AIC in 78% of 200 resamples, spline, 4 knots 19%``."""
        ranked = sorted(self.shares.items(), key=lambda kv: -kv[1])[:top]
        if not ranked:
            return f"no candidate could be fitted in {self.resamples} resamples"
        first, *rest = ranked
        text = (
            f"{labels.get(first[0], first[0])} lowest AIC in {percent(first[1])} "
            f"of {self.resamples} resamples"
        )
        for key, share in rest:
            text += f", {labels.get(key, key)} {percent(share)}"
        return text


def percent(share: float) -> str:
    """A share as a whole percentage (``78%``; ``<1%`` for a share that rounds to 0)."""
    if 0 < share < 0.005:
        return "<1%"
    return f"{round(100 * share):d}%"


def resampled_counts(
    counts: ReducedCounts, resamples: int, seed: int
) -> tuple[np.ndarray, np.ndarray]:
    """Events and rows per cell in each of ``resamples`` multinomial resamples of the
    rows (resamples × cells each)."""
    rng = np.random.default_rng(seed)
    cells = np.concatenate([counts.events, counts.trials - counts.events])
    cells = np.maximum(cells, 0.0)
    total = int(round(counts.rows))
    drawn = rng.multinomial(total, cells / cells.sum(), size=resamples).astype(float)
    m = counts.x.size
    events, nonevents = drawn[:, :m], drawn[:, m:]
    return events, events + nonevents


def _options(candidate: Candidate, counts: ReducedCounts, table: ComparisonTable) -> list[Recoding]:
    """What a candidate chooses among in a resample: its search's options, or the
    recoding it learned on the whole data."""
    searched = candidate.search_options(counts)
    if searched:
        return searched
    row = table.row(candidate.key)
    return [row.recoding] if row is not None and row.recoding is not None else []


def selection_shares(
    counts: ReducedCounts,
    table: ComparisonTable,
    candidates: Sequence[Candidate],
    resamples: int = DEFAULT_RESAMPLES,
    seed: int = DEFAULT_SEED,
) -> SelectionShares | None:
    """Bootstrap shares of the lowest AIC among the rows of ``table`` (fitted from
    ``candidates`` on ``counts``); None for an adjusted check (rows with covariates)."""
    if counts.covariates is not None or resamples < 1:
        return None
    with one_blas_thread():  # many small products: threads only contend
        return _shares(counts, table, candidates, resamples, seed)


def _shares(
    counts: ReducedCounts,
    table: ComparisonTable,
    candidates: Sequence[Candidate],
    resamples: int,
    seed: int,
) -> SelectionShares:
    events, trials = resampled_counts(counts, resamples, seed)
    keys, aics = [], []
    for candidate in candidates:
        row = table.row(candidate.key)
        if row is None or row.recoding is None:
            continue
        best = np.full(resamples, -np.inf)
        for recoding in _options(candidate, counts, table):
            design = design_matrix(recoding, counts.x)
            if not np.isfinite(design).all():
                continue
            start = fit_logistic(design, counts.events, counts.trials)
            if start.rank_deficient:
                continue
            fits = fit_stacked(design, events, trials, start)
            best = np.where(fits.ok, np.maximum(best, fits.llf), best)
        keys.append(row.key)
        aics.append(-2.0 * best + 2.0 * (row.df + 1))  # the table's df: searches counted
    if not keys:
        return SelectionShares({}, resamples, seed, 0)
    stacked = np.vstack(aics)  # candidates × resamples; a failed fit is +inf
    usable = np.isfinite(stacked).any(axis=0)
    winners = np.argmin(np.where(np.isfinite(stacked), stacked, np.inf), axis=0)[usable]
    won = np.bincount(winners, minlength=len(keys))
    n = int(usable.sum())
    shares = {k: float(w) / n for k, w in zip(keys, won, strict=True) if w > 0} if n else {}
    return SelectionShares(shares, resamples, seed, n)

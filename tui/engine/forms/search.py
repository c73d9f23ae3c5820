"""Choose the best of many recodings of one kind by likelihood (powers, knots, cut points).

On reduced counts the members are fitted as one stack (``tui.engine.batch_fit``), their
designs built in one go by the kind (``Kind.apply_many``); the choice is the same as
fitting them one at a time, since every member near the top, and every member the stack
cannot settle, is fitted alone before choosing; the members near the top that it settles
are refined to the maximum in the stack, their fits taken from it. The chosen member's own
fit is handed back with it, so the candidate does not fit it again.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from tui.engine.batch_fit import BatchFits, fit_stack
from tui.engine.counts import ReducedCounts
from tui.engine.fitting import LogisticFit
from tui.engine.forms.base import (
    Candidate,
    Learned,
    Recoding,
    RecodingError,
    design_matrix,
    fit_on_counts,
)

_WINDOW = 1e-7
"""Members within this share of the best log-likelihood get their exact fits."""

Key = tuple[bool, float] | None
"""(usable, log-likelihood) of a member; None where the form cannot be applied."""


def search(recodings: list[Recoding], counts: ReducedCounts) -> Recoding:
    """The recoding with the highest likelihood on the counts (first wins ties).

    Separated or non-converged members lose to any usable one.
    """
    return search_fitted(recodings, counts)[0]


def search_fitted(
    recodings: list[Recoding], counts: ReducedCounts
) -> tuple[Recoding, LogisticFit | None]:
    """``search``, with the chosen member's fit when it was fitted alone (the fit
    ``fit_on_counts`` gives it), else None."""
    fits: dict[int, LogisticFit] = {}
    if counts.covariates is None and len(recodings) > 2:
        keys = _stacked_keys(recodings, counts, fits)
    else:
        keys = _single_keys(recodings, counts, range(len(recodings)), fits)
    chosen = _choose(keys)
    return recodings[chosen], fits.get(chosen)


def learned_by_search(recodings: list[Recoding], counts: ReducedCounts) -> Learned:
    """What a searching candidate learns: the best member, its fit kept."""
    recoding, fit = search_fitted(recodings, counts)
    return Learned(recoding, searched=True, fit=fit)


def search_singly(recodings: list[Recoding], counts: ReducedCounts) -> Recoding:
    """``search`` fitting one member at a time (the reference the stacked search is
    tested against)."""
    return recodings[_choose(_single_keys(recodings, counts, range(len(recodings)), {}))]


def _single_keys(
    recodings: list[Recoding],
    counts: ReducedCounts,
    which: range | list[int],
    fits: dict[int, LogisticFit],
) -> list[Key]:
    keys: list[Key] = [None] * len(recodings)
    for i in which:
        try:
            fit = fit_on_counts(recodings[i], counts)
        except RecodingError:
            continue
        fits[i] = fit
        keys[i] = (fit.ok, fit.llf)
    return keys


def stacked_designs(recodings: list[Recoding], x: np.ndarray) -> np.ndarray | None:
    """Designs of every member (members × rows × (1 + outputs)), each equal to its
    ``design_matrix``; None when the members differ in kind, clip, fill or width."""
    first = recodings[0]
    plain = all(r.form == first.form and r.clip is None and r.missing is None for r in recodings)
    if not plain or not np.all(np.isfinite(x)):
        return None
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        outputs = first.form.apply_many([r.params for r in recodings], x)
    if outputs.ndim != 3:
        return None
    k, m, q = outputs.shape
    # Held column by column (a transposed view is returned), the layout ``fit_stack``
    # works in, so it need not copy them again.
    columns = np.empty((k, q + 1, m))
    columns[:, 0] = 1.0
    columns[:, 1:] = outputs.transpose(0, 2, 1)
    return columns.transpose(0, 2, 1)


def _stacked_keys(
    recodings: list[Recoding], counts: ReducedCounts, fits: dict[int, LogisticFit]
) -> list[Key]:
    """Keys of every member: the stack ranks them and refines those near the top, the
    members it cannot settle are fitted alone (``fits`` keeps the near and single fits)."""
    designs = stacked_designs(recodings, counts.x)
    if designs is None:
        listed = [design_matrix(rec, counts.x) for rec in recodings]
        if len({d.shape for d in listed}) != 1:
            finite = [i for i, d in enumerate(listed) if np.all(np.isfinite(d))]
            return _single_keys(recodings, counts, finite, fits)
        designs = np.stack(listed)
    finite = np.isfinite(designs).all(axis=(1, 2))
    at = np.flatnonzero(finite)
    if not at.size:
        return [None] * len(recodings)
    # The designs are built here and not used again: the stack may scale them in place.
    # Members near the top are refined to the maximum, so their fits come from the stack.
    stack = fit_stack(
        designs[at] if at.size < finite.size else designs,
        counts.events,
        counts.trials,
        overwrite=True,
        refine_within=_WINDOW,
    )
    return _keys_from_stack(recodings, counts, at, stack, fits)


def _keys_from_stack(
    recodings: list[Recoding],
    counts: ReducedCounts,
    at: np.ndarray,
    stack: BatchFits,
    fits: dict[int, LogisticFit],
) -> list[Key]:
    """Keys from the stack of members ``at`` (the others get None): refined members with
    their fits, members far below the best by their stacked log-likelihood, and the rest
    fitted alone."""
    keys: list[Key] = [None] * len(recodings)
    top = max((float(ll) for ll in stack.llf[stack.settled]), default=-np.inf)
    window = _WINDOW * (abs(top) + 1.0)
    alone: list[int] = []
    nobs = float(np.sum(counts.trials))
    for j, i in enumerate(at.tolist()):
        ll = float(stack.llf[j])
        if stack.refined[j]:
            keys[i] = (True, ll)
            fits[i] = _stacked_fit(stack.coef[j], ll, nobs)
        elif stack.settled[j] and ll < top - window:
            keys[i] = (True, ll)  # far below the best: its exact value cannot matter
        else:
            alone.append(i)
    single = _single_keys(recodings, counts, alone, fits)
    for i in alone:
        keys[i] = single[i]
    return keys


def learn_searches(candidates: Sequence[Candidate], counts: ReducedCounts) -> dict[int, Learned]:
    """What each searching candidate learns (by its index), as its own ``learn`` would:
    the searches whose designs are of one width are fitted as one stack, each member
    judged within its own search, so the stack's fixed costs are paid once. A candidate
    left out (no search, covariates, designs not stackable or not finite, nothing
    usable) learns by itself."""
    if counts.covariates is not None:
        return {}
    by_width: dict[int, list[tuple[int, list[Recoding], np.ndarray]]] = {}
    for n, candidate in enumerate(candidates):
        try:
            options = candidate.search_options(counts)
            designs = (
                None if not options or len(options) <= 2 else stacked_designs(options, counts.x)
            )
        except (RecodingError, ValueError, np.linalg.LinAlgError):
            continue
        if options is None or designs is None or not np.all(np.isfinite(designs)):
            continue
        # Held column by column (members × columns × rows), as stacked_designs builds them.
        by_width.setdefault(designs.shape[2], []).append((n, options, designs.transpose(0, 2, 1)))
    learned: dict[int, Learned] = {}
    for searches in by_width.values():
        columns = np.concatenate([c for _, _, c in searches])
        groups = np.repeat(np.arange(len(searches)), [len(o) for _, o, _ in searches])
        try:
            stack = fit_stack(
                columns.transpose(0, 2, 1),
                counts.events,
                counts.trials,
                overwrite=True,
                refine_within=_WINDOW,
                groups=groups,
            )
        except (ValueError, np.linalg.LinAlgError):
            continue
        start = 0
        for n, options, _ in searches:
            part = slice(start, start + len(options))
            start = part.stop
            fits: dict[int, LogisticFit] = {}
            every = np.arange(len(options))
            try:
                chosen = _choose(_keys_from_stack(options, counts, every, stack[part], fits))
            except (RecodingError, ValueError, np.linalg.LinAlgError):
                continue
            learned[n] = Learned(options[chosen], searched=True, fit=fits.get(chosen))
    return learned


def _stacked_fit(coef: np.ndarray, llf: float, nobs: float) -> LogisticFit:
    """The fit of a member the stack settled and refined: converged, full rank (the
    stack's rank margin is wider than ``fit_logistic``'s) and clear of separation."""
    return LogisticFit(
        coef=coef.copy(),
        llf=llf,
        nobs=nobs,
        n_params=coef.size,
        converged=True,
        separated=False,
        rank_deficient=False,
    )


def _choose(keys: list[Key]) -> int:
    """The first member with the best key, a usable fit beating any unusable one."""
    best: tuple[bool, float, int] | None = None
    for i, key in enumerate(keys):
        if key is None:
            continue
        if best is None or key[0] > best[0] or (key[0] == best[0] and key[1] > best[1] + 1e-9):
            best = (key[0], key[1], i)
    if best is None:
        raise RecodingError("no member of the search could be fitted")
    return best[2]

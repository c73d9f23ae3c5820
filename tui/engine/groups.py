"""Quantile groups of x with the empirical logit of each group.

Empirical logit with the 1/2 correction, ln((e + 1/2) / (n - e + 1/2)), and its
approximate variance 1/(e + 1/2) + 1/(n - e + 1/2) (Haldane 1956; Anscombe 1956).
Each group is plotted at the median x of its rows.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tui.engine.counts import ReducedCounts, weighted_type7_quantile

GROUP_CHOICES = (4, 5, 10, 20)
MIN_GROUPS, MAX_GROUPS = 4, 20


@dataclass(frozen=True)
class LogitGroup:
    """One quantile group: its rows, events and empirical logit."""

    lower: float
    """Smallest x in the group."""
    upper: float
    """Largest x in the group."""
    n: float
    """Rows in the group."""
    events: float
    """Events in the group."""
    median: float
    """Median x of the group's rows (plotting position)."""
    logit: float
    """Empirical logit with the 1/2 correction."""
    variance: float
    """Approximate variance of the empirical logit."""

    @property
    def proportion(self) -> float:
        """Observed event proportion."""
        return self.events / self.n if self.n else float("nan")

    @property
    def se(self) -> float:
        """Approximate standard error of the empirical logit."""
        return float(np.sqrt(self.variance))


def empirical_logit(events: float, n: float) -> tuple[float, float]:
    """Empirical logit and its approximate variance, with the 1/2 correction."""
    a, b = events + 0.5, n - events + 0.5
    return float(np.log(a / b)), float(1.0 / a + 1.0 / b)


def group_edges(counts: ReducedCounts, groups: int) -> np.ndarray:
    """Interior edges at quantiles i/groups of x; tied edges merged. Group g holds the x
    with exactly g edges below them, so a value equal to an edge falls in the lower group."""
    if not MIN_GROUPS <= groups <= MAX_GROUPS:
        raise ValueError(f"groups must be between {MIN_GROUPS} and {MAX_GROUPS}, not {groups}")
    if counts.distinct == 0:
        return np.zeros(0)
    edges = np.unique(counts.quantile(np.arange(1, groups) / groups))
    return edges[edges < counts.x[-1]]  # an edge at the maximum would leave a group empty


def group_index(edges: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Group of each x: the number of edges strictly below it."""
    return np.searchsorted(edges, x, side="left")


def logit_groups(counts: ReducedCounts, groups: int = 4) -> list[LogitGroup]:
    """Empirical logits of the quantile groups of x."""
    edges = group_edges(counts, groups)
    which = group_index(edges, counts.x)
    out: list[LogitGroup] = []
    for g in range(edges.size + 1):
        sel = which == g
        if not sel.any():
            continue
        x, n, e = counts.x[sel], counts.trials[sel], counts.events[sel]
        total, ev = float(n.sum()), float(e.sum())
        logit, var = empirical_logit(ev, total)
        median = float(weighted_type7_quantile(x, n, np.array([0.5]))[0])
        out.append(LogitGroup(float(x[0]), float(x[-1]), total, ev, median, logit, var))
    return out

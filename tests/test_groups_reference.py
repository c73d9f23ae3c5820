"""Quantile groups and empirical logits against published values and numpy."""

import numpy as np
import pytest

from tui.engine.counts import reduce_column
from tui.engine.groups import empirical_logit, group_edges, logit_groups


@pytest.mark.parametrize(
    "events, n, logit, variance",
    [(0, 10, -3.0445, 2.0952), (3, 10, -0.7621, 0.4190)],
)
def test_empirical_logit_with_half_correction(events, n, logit, variance):
    # Haldane (1956); Anscombe (1956); Cox & Snell, Analysis of Binary Data (1989).
    got_logit, got_var = empirical_logit(events, n)
    assert got_logit == pytest.approx(logit, abs=5e-5)
    assert got_var == pytest.approx(variance, abs=5e-5)


def test_quartile_edges_equal_numpy_quantile(rng):
    # Reference library numpy: numpy.quantile default method (Hyndman & Fan 1996, type 7).
    x = rng.exponential(2.0, 999)
    x[::37] = np.nan
    counts = reduce_column(x, (rng.random(999) < 0.4).astype(float))
    expected = np.quantile(x[np.isfinite(x)], [0.25, 0.5, 0.75])
    np.testing.assert_allclose(group_edges(counts, 4), expected, rtol=0, atol=1e-12)


def test_groups_count_rows_and_events_and_sit_at_medians(rng):
    # Groups of x with their empirical logits at group medians (common practice;
    # Hosmer, Lemeshow & Sturdivant, Applied Logistic Regression 3rd ed., ch. 4).
    x = rng.normal(50, 10, 800)
    y = (rng.random(800) < 0.25).astype(float)
    groups = logit_groups(reduce_column(x, y), 4)
    assert len(groups) == 4
    assert sum(g.n for g in groups) == 800 and sum(g.events for g in groups) == y.sum()
    edges = np.quantile(x, [0.25, 0.5, 0.75])
    which = np.searchsorted(edges, x, side="left")  # x equal to an edge goes low
    for g, group in enumerate(groups):
        rows = x[which == g]
        assert group.n == rows.size
        assert group.median == pytest.approx(np.median(rows), abs=1e-12)
        assert group.events == y[which == g].sum()


def test_tied_edges_are_merged(rng):
    x = np.r_[np.zeros(600), rng.uniform(1, 5, 400)]  # a spike at zero
    groups = logit_groups(reduce_column(x, (rng.random(1000) < 0.3).astype(float)), 4)
    assert len(groups) == 3  # the zeros, then two groups of the positive part
    assert groups[0].lower == groups[0].upper == 0.0 and groups[0].n == 600


def test_group_count_is_checked():
    with pytest.raises(ValueError, match="groups"):
        group_edges(reduce_column(np.arange(10.0), np.zeros(10)), 3)


def test_bands_put_training_rows_in_the_quantile_groups(rng):
    from tui.engine.forms.bands import BandsCandidate

    x = np.r_[np.zeros(300), np.round(rng.gamma(2, 2, 700), 1)]
    counts = reduce_column(x, (rng.random(1000) < 0.3).astype(float))
    groups = logit_groups(counts, 5)
    bands = BandsCandidate(5).learn(counts).recoding
    out = bands.apply(x)
    band_of_row = np.where(out.sum(axis=1) == 0, 0, out.argmax(axis=1) + 1)
    sizes = np.bincount(band_of_row)
    np.testing.assert_array_equal(sizes, [g.n for g in groups])

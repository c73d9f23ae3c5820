"""Binned columns learn extremes and gaps from their rows, and their fits stay close to exact."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.special import expit

from tui.engine.compare import compare_forms
from tui.engine.counts import reduce_column
from tui.engine.forms.shift import learn_shift

BINNED_LR_TOLERANCE = 0.03
"""Largest relative LR difference binned against exact accepted here, or 2 deviance points
for small LRs (a searched cut point moves between bin means), at 40,000 rows and the
default 1,000 bins; benchmarks/results/binned_accuracy.md has the 250,000-row figures."""


def _lognormal_with_negatives(n: int = 40_000, seed: int = 21):
    rng = np.random.default_rng(seed)
    x = rng.lognormal(1.0, 1.0, n)
    x[rng.choice(n, 40, replace=False)] = rng.uniform(-2, 0, 40)
    return x, (rng.random(n) < expit(-1 + 0.4 * np.log(x + 2.5))).astype(float)


def test_binned_shift_comes_from_the_rows_and_every_training_row_is_finite():
    # Royston & Sauerbrei (2008) shift (from memory): -min(x) + smallest gap, numpy on rows.
    x, y = _lognormal_with_negatives()
    binned = reduce_column(x, y, exact_below=0)
    assert not binned.exact and binned.distinct < np.unique(x).size
    xs = np.unique(x)
    assert learn_shift(binned) == -xs[0] + np.diff(xs).min()
    table = compare_forms(binned)
    for key in ("log", "fp1", "fp2"):
        rec = table.row(key).recoding
        assert np.isfinite(rec.apply(x)).all(), key


def test_binned_likelihood_ratios_stay_close_to_exact_fits():
    # Reference: the same engine on every distinct value (exact, equal to statsmodels on
    # the rows: test_hard_adversarial.py).
    x, y = _lognormal_with_negatives()
    binned = compare_forms(reduce_column(x, y, exact_below=0))
    exact = compare_forms(reduce_column(x, y, max_levels=10**6))
    for b, e in zip(binned.rows[1:], exact.rows[1:], strict=True):
        lr_b = binned.linear.deviance - b.deviance
        lr_e = exact.linear.deviance - e.deviance
        assert lr_b == pytest.approx(lr_e, rel=BINNED_LR_TOLERANCE, abs=2.0), b.key

"""Restricted cubic spline on a long upper tail: stable basis, replay, SQL and score."""

from __future__ import annotations

from fractions import Fraction

import duckdb
import numpy as np
import pandas as pd
import pytest
from hard_data import long_tail, reference_deviance

from tui.engine.counts import reduce_column
from tui.engine.forms import make_recoding
from tui.engine.forms.spline import learn_knots, spline_basis
from tui.engine.scan import scan_column


def _published_basis_exact(x: np.ndarray, knots: list[float]) -> np.ndarray:
    """Stone & Koo (1985) / Harrell (2015) truncated-power formula in exact rational
    arithmetic (Python's fractions): no cancellation at all, so a reference for any x."""
    t = [Fraction(v) for v in knots]
    k = len(t)
    span2 = (t[-1] - t[0]) ** 2

    def pos3(v: Fraction) -> Fraction:
        return v**3 if v > 0 else Fraction(0)

    rows = []
    for value in x:
        v = Fraction(float(value))
        row = [float(v)]
        for j in range(k - 2):
            term = (
                pos3(v - t[j])
                - pos3(v - t[k - 2]) * (t[k - 1] - t[j]) / (t[k - 1] - t[k - 2])
                + pos3(v - t[k - 1]) * (t[k - 2] - t[j]) / (t[k - 1] - t[k - 2])
            )
            row.append(float(term / span2))
        rows.append(row)
    return np.array(rows)


def _tail_column():
    x, y = long_tail(5000, seed=0)
    knots = learn_knots(reduce_column(x, y), 4)
    return x, y, knots


def test_basis_equals_exact_published_formula_far_beyond_the_last_knot():
    # Reference: the published formula in exact arithmetic (Stone & Koo 1985).
    x, _, knots = _tail_column()
    probe = np.r_[np.linspace(-1, 2, 61), np.sort(x)[-200:], 6.5e6, 1e12]
    ours = spline_basis(probe, knots)
    exact = _published_basis_exact(probe, knots)
    np.testing.assert_allclose(ours, exact, rtol=1e-11, atol=1e-12)


def test_replay_and_duckdb_sql_equal_the_exact_basis_on_a_long_tail():
    # Reference: exact rational evaluation of the published basis; DuckDB runs our SQL.
    x, _, knots = _tail_column()
    rec = make_recoding("spline", {"knots": knots})
    exact = _published_basis_exact(x, knots)
    replayed = rec.apply(x)
    np.testing.assert_allclose(replayed, exact, rtol=1e-11, atol=1e-12)
    con = duckdb.connect()
    con.register("t", pd.DataFrame({"x": x}))
    exprs = ", ".join(f"{e} AS c{i}" for i, e in enumerate(rec.sql('"x"')))
    sql_out = con.execute(f"SELECT {exprs} FROM t").df().to_numpy(dtype=float)
    np.testing.assert_allclose(sql_out, exact, rtol=1e-10, atol=1e-11)


def test_score_of_a_long_tail_column_equals_statsmodels():
    # Reference library statsmodels GLM Binomial on the exact basis, standardised.
    x, y, knots = _tail_column()
    assert x.max() / (knots[-1] - knots[0]) > 1e6  # where the old basis broke down
    scan, _ = scan_column("x", x, y)
    basis = _published_basis_exact(x, knots)
    expected = reference_deviance(basis[:, :1], y) - reference_deviance(basis, y)
    assert scan.score == pytest.approx(expected, abs=1e-6)  # statsmodels: 20.92
    assert scan.df == 2

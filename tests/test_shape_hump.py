"""Shape hints: an inverted U has its own word."""

import numpy as np
from scipy.special import expit

from tui.engine.scan import scan_column
from tui.engine.shape import HUMP, SHAPES, U_SHAPE, curve_shape


def test_inverted_u_is_a_hump_and_u_is_a_u_shape():
    grid = np.linspace(-2, 2, 201)
    assert curve_shape(grid, -(grid**2)) == HUMP == "hump"
    assert curve_shape(grid, grid**2) == U_SHAPE
    assert HUMP in SHAPES and HUMP != U_SHAPE


def test_scan_hints_a_planted_inverted_u_as_hump(rng):
    x = rng.uniform(0, 10, 4000)
    y = (rng.random(x.size) < expit(1 - 0.15 * (x - 5) ** 2)).astype(float)
    scan, _ = scan_column("x", x, y)
    assert scan.shape == "hump"

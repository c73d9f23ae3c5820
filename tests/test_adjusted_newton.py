"""The shared pieces of adjusted fits: the covariate block's Hessian pieces, the chord
steps' likelihood, and the scan command starting without the report's plotting library.

Reference for the fitted likelihood: statsmodels GLM Binomial on the same design.
"""

import subprocess
import sys

import numpy as np
import pytest
import statsmodels.api as sm

from tui.engine.adjusted_newton import ColumnRows, covariate_block, loglik


def _rows(rng, n, missing_share, bend=0.3):
    z = np.column_stack([rng.normal(size=n), rng.uniform(-1, 1, n)])
    x = rng.gamma(2.0, 1.0, n) + 0.3 * z[:, 0]
    eta = -0.5 + 0.7 * z[:, 0] - 0.4 * z[:, 1] + bend * (x - 2.0) ** 2
    y = (rng.random(n) < 1 / (1 + np.exp(-eta))).astype(float)
    x[rng.random(n) < missing_share] = np.nan
    return z, x, y


@pytest.mark.parametrize("missing_share", [0.0, 0.05, 0.5])
def test_column_rows_hessian_pieces_equal_a_direct_computation(rng, missing_share):
    # Few missing rows: the block's cross product minus theirs; many: computed afresh;
    # none: the block's own. Each must be the cross product over the column's rows.
    z, x, y = _rows(rng, 3000, missing_share)
    block = covariate_block(z, y)
    rows = ColumnRows.of(block, x)
    keep = np.isfinite(x)
    standard = block.standard[:, keep]
    mean = 1 / (1 + np.exp(-(block.beta @ standard)))
    root = np.sqrt(mean * (1 - mean))
    np.testing.assert_allclose(rows.base_root, root, rtol=1e-12)
    np.testing.assert_allclose(rows.weighted, standard * root, rtol=1e-12)
    direct = (standard * root) @ (standard * root).T
    np.testing.assert_allclose(rows.covariate_cross, direct, rtol=1e-10, atol=1e-9)
    np.testing.assert_allclose(rows.covariate_means, z[keep].mean(axis=0), rtol=1e-12)


def test_chord_likelihood_is_the_likelihood_at_its_coefficients(rng):
    # The chord steps return the likelihood where their last step starts plus that step's
    # predicted gain: it must equal the likelihood at the returned coefficients, and
    # statsmodels' maximum, to far better than the 1e-6 the scores need.
    z, x, y = _rows(rng, 20000, 0.0, bend=0.05)
    rows = ColumnRows.of(covariate_block(z, y), x)
    basis = x[:, None]  # a linear term: the chord steps settle it (no full Newton step)
    fit, standard = rows.fit(basis)
    assert standard is not None
    design = np.column_stack([np.ones(x.size), z, basis])
    at_coef = loglik(design @ fit.coef, y, None)
    assert fit.llf == pytest.approx(at_coef, abs=1e-8)
    ref = sm.GLM(y, design, family=sm.families.Binomial()).fit(tol=1e-12)
    assert fit.llf == pytest.approx(ref.llf, abs=1e-8)
    np.testing.assert_allclose(fit.coef, ref.params, rtol=1e-5, atol=1e-7)


@pytest.mark.parametrize("missing_share", [0.0, 0.05])
def test_fits_taken_together_equal_the_fits_one_at_a_time(rng, missing_share):
    # fit_many steps several one-column forms at once; each must end where fit ends on
    # its own. The set holds forms the chord settles, a form handed on to full Newton
    # steps or the general solver (a huge-scale power), and a constant form (rank lost);
    # the settled ones are also checked against statsmodels (GLM Binomial).
    z, x, y = _rows(rng, 8000, missing_share, bend=0.2)
    rows = ColumnRows.of(covariate_block(z, y), x)
    xr = rows.x
    up = xr - xr.min() + 1.0
    bases = [xr, np.log(up), np.sqrt(up), up**3, np.full(xr.size, 2.0), (xr > 2.0).astype(float)]
    together = rows.fit_many(bases)
    for basis, (fit, standard) in zip(bases, together, strict=True):
        alone, alone_standard = rows.fit(basis[:, None])
        assert fit.rank_deficient == alone.rank_deficient
        assert fit.converged == alone.converged
        assert fit.llf == pytest.approx(alone.llf, rel=1e-12, abs=1e-9)
        np.testing.assert_allclose(fit.coef, alone.coef, rtol=1e-9, atol=1e-10)
        assert (standard is None) == (alone_standard is None)
        if not fit.rank_deficient:
            design = np.column_stack([np.ones(xr.size), rows.covariates, basis])
            ref = sm.GLM(rows.events, design, family=sm.families.Binomial()).fit(tol=1e-12)
            assert fit.llf == pytest.approx(ref.llf, abs=1e-7)


def test_scan_command_starts_without_the_plotting_library():
    # matplotlib takes about a second to import; only a report draws with it.
    code = "import sys, tui.cli.main; print('matplotlib' in sys.modules)"
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "False"


def test_freed_memory_is_kept_for_reuse_on_glibc():
    # The setting is process-wide and asked for once; a fresh interpreter checks it took.
    import platform

    if platform.libc_ver()[0] != "glibc":
        pytest.skip("mallopt is glibc's")
    code = "from tui.engine.heap import reuse_freed_memory as r; print(r(), r())"
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    assert done.stdout.split() == ["True", "True"]

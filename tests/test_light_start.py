"""Start-up without scipy or statsmodels: the closed-form chi-square tail and the small
dense solves that replace them, checked against those libraries, and a fresh interpreter
that loads the command line without them."""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest
from scipy import special

from tui.engine import dense
from tui.engine.chi_square import chi2_upper
from tui.engine.fitting import expit


@pytest.mark.parametrize("df", [1, 2, 3, 4, 5, 8, 13, 40, 399, 400])
def test_chi_square_tail_matches_scipy(df):
    # Reference library: scipy.special.chdtrc, the tail scipy.stats.chi2.sf calls.
    for x in [1e-9, 1e-3, 0.3, 1.0, 2.5, 3.84, 9.0, 30.0, 120.0, 700.0, 1300.0]:
        expected = float(special.chdtrc(df, x))
        assert chi2_upper(df, x) == pytest.approx(expected, rel=1e-12, abs=1e-300)


def test_chi_square_tail_handbook_values_and_edges():
    # Handbook critical values (common practice, 5 % and 1 % points, from memory).
    assert chi2_upper(1, 3.841458820694124) == pytest.approx(0.05, rel=1e-12)
    assert chi2_upper(2, 5.991464547107979) == pytest.approx(0.05, rel=1e-12)
    assert chi2_upper(3, 11.344866730144373) == pytest.approx(0.01, rel=1e-12)
    assert chi2_upper(2, 0.0) == 1.0
    assert chi2_upper(2, float("inf")) == 0.0
    assert np.isnan(chi2_upper(2, float("nan")))
    # Outside the closed form (fractional or large df): scipy itself, imported then.
    assert chi2_upper(2.5, 4.0) == float(special.chdtrc(2.5, 4.0))
    assert chi2_upper(1000, 1100.0) == float(special.chdtrc(1000, 1100.0))


def test_expit_matches_scipy_to_rounding():
    eta = np.concatenate([np.linspace(-700, 700, 20001), [0.0, -0.0, 1e-300, -1e-300]])
    # Reference library: scipy.special.expit; a unit or two in the last place apart.
    np.testing.assert_allclose(expit(eta), special.expit(eta), rtol=1e-15, atol=0)


def test_dense_solves_match_numpy_linalg_and_report_failure():
    rng = np.random.default_rng(7)
    a = rng.normal(size=(200, 6))
    h, g = a.T @ a, rng.normal(size=6)
    # Reference library: numpy.linalg (the same LAPACK kernels behind its checks).
    np.testing.assert_allclose(dense.solve(h, g), np.linalg.solve(h, g), rtol=1e-12)
    np.testing.assert_allclose(dense.cholesky_lower(h), np.linalg.cholesky(h), rtol=1e-12)
    np.testing.assert_allclose(dense.inverse(h), np.linalg.inv(h), rtol=1e-12)
    np.testing.assert_allclose(np.abs(dense.qr_r(a)), np.abs(np.linalg.qr(a, mode="r")),
                               rtol=1e-12, atol=1e-12)  # fmt: skip
    singular = np.ones((3, 3))
    assert dense.solve(singular, np.ones(3)) is None
    assert dense.inverse(singular) is None
    assert dense.cholesky_lower(-h) is None


def test_command_line_starts_without_scipy_or_statsmodels():
    code = (
        "import sys, tui.cli.main\n"
        "print(','.join(sorted({m.split('.')[0] for m in sys.modules} & {'scipy', 'statsmodels'})))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_scan_parser_loads_neither_the_app_nor_the_report():
    # A scan's start-up imports only its own command: the report (and, inside its run, the
    # review app) belong to their commands; --help, listing every command, loads the report.
    code = (
        "import sys, tui.cli.main as m\n"
        "heavy = {'textual', 'tui.app', 'tui.report'}\n"
        "m.build_parser('scan')\n"
        "print('scan:', sorted(heavy & set(sys.modules)))\n"
        "m.build_parser()\n"
        "print('all:', sorted(heavy & set(sys.modules)))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    scan, every = out.stdout.splitlines()
    assert scan == "scan: []"
    assert "tui.report" in every


def test_parquet_scan_never_imports_pandas(tmp_path):
    # A Parquet scan reads through pyarrow alone: numbers, booleans with gaps, text with
    # blanks and a text outcome, written here by pyarrow (no pandas metadata).
    import pyarrow as pa
    import pyarrow.parquet as pq

    rng = np.random.default_rng(11)
    rows = 400
    size = rng.normal(size=rows)
    event = rng.random(rows) < 1 / (1 + np.exp(-(size**2 - 1)))
    table = pa.table(
        {
            "status": pa.array(np.where(event, "failed", "held").tolist()),
            "size": pa.array(size),
            "count": pa.array(rng.integers(0, 30, rows)),
            "gappy": pa.array([None if i % 9 == 0 else float(i % 13) for i in range(rows)]),
            "flag": pa.array([None if i % 5 == 0 else bool(i % 2) for i in range(rows)]),
            "site": pa.array([["north", " ", None][i % 3] for i in range(rows)]),
        }
    )
    data, out = tmp_path / "parts.parquet", tmp_path / "scan.csv"
    pq.write_table(table, data)
    code = (
        "import sys\n"
        "from tui.cli.main import main\n"
        f"rc = main(['scan', {str(data)!r}, '--outcome', 'status', '--event', 'failed',\n"
        f"           '--format', 'csv', '--output', {str(out)!r}])\n"
        "print(rc, 'pandas' in sys.modules)"
    )
    ran = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert ran.stdout.split() == ["0", "False"], ran.stderr
    lines = out.read_text().splitlines()
    assert {line.split(",")[0] for line in lines[1:]} == {"size", "count", "gappy", "flag", "site"}

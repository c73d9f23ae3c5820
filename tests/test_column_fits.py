"""The one candidate assembly (engine ``fit_column``): hand-typed forms, the column rules,
and the fit cache handing out exactly what the engine computed."""

import subprocess
import sys

import numpy as np
import pytest
import statsmodels.api as sm
from app_fleet import OUTCOME, write_fleet

from tui.app.fit_cache import FitCache, FitRequest
from tui.engine.column_fits import CandidateSet, fit_column
from tui.engine.compare import compare_forms
from tui.engine.counts import reduce_column
from tui.engine.fittable import ONE_CLASS, one_outcome_class, too_few_values
from tui.engine.forms.registry import default_candidates
from tui.engine.scan import scan_column
from tui.intake.dataset import open_dataset


def _sample(rng, n=900):
    x = rng.uniform(0.0, 10.0, n).round(1)
    y = (rng.random(n) < 1 / (1 + np.exp(-(0.4 * np.maximum(x - 6.0, 0) - 1.0)))).astype(float)
    return x, y


def test_a_typed_hinge_is_fitted_as_statsmodels_fits_it(rng):
    # Reference library: statsmodels GLM Binomial on the design [1, x, max(x - 6, 0)].
    x, y = _sample(rng)
    fits = fit_column(reduce_column(x, y), CandidateSet(4, 4, hinges=(6.0,)))
    hinge = fits.table.rows[-1]  # hand-typed forms come after the defaults
    assert hinge.label in CandidateSet(4, 4, hinges=(6.0,)).hand_labels()
    design = np.column_stack([np.ones(x.size), x, np.maximum(x - 6.0, 0.0)])
    direct = sm.GLM(y, design, family=sm.families.Binomial()).fit()
    assert hinge.deviance == pytest.approx(direct.deviance, abs=1e-6)
    assert hinge.aic == pytest.approx(direct.aic, abs=1e-6)


def test_the_table_is_the_defaults_then_the_typed_forms(rng):
    x, y = _sample(rng)
    counts = reduce_column(x, y)
    wanted = CandidateSet(5, 3, cuts=(2.5,), hinges=(7.0,))
    fits = fit_column(counts, wanted)
    direct = compare_forms(counts, default_candidates(5, 3) + wanted.by_hand(), 5, 3)
    assert [r.label for r in fits.table.rows] == [r.label for r in direct.rows]
    assert [r.deviance for r in fits.table.rows] == pytest.approx([r.deviance for r in direct.rows])
    assert len(fits.groups) == 5 and fits.problem is None
    assert fits.smoother is not None and fit_column(counts, wanted, smooth=False).smoother is None


def test_two_values_give_the_linear_form_only_and_the_scan_agrees():
    x = np.array([0.0, 1.0] * 50)
    y = np.array([0.0, 0.0, 1.0, 1.0] * 25)
    counts = reduce_column(x, y)
    fits = fit_column(counts, CandidateSet(4, 4))
    assert too_few_values(counts)
    assert [r.kind for r in fits.table.rows] == ["linear"]
    assert fits.problem.startswith("two values only")
    scan, table = scan_column("x", x, y)
    assert scan.score is None and table is None  # the scan skips it by the same rule


def test_one_outcome_class_gives_no_table():
    x = np.linspace(0.0, 1.0, 50)
    counts = reduce_column(x, np.zeros(50))
    assert one_outcome_class(counts)
    fits = fit_column(counts, CandidateSet(4, 4))
    assert fits.table is None and fits.problem == ONE_CLASS


def test_the_cache_hands_out_the_engines_fits(tmp_path):
    data = open_dataset(write_fleet(tmp_path), OUTCOME)
    cache = FitCache(data, 5000)
    request = FitRequest("route_km", 4, 4, cuts=(30.0,), hinges=(60.0,))
    got = cache.fits(request)
    engine = fit_column(reduce_column(data.raw_values("route_km"), data.outcome.y), request.wanted)
    assert got.request == request and cache.fits(request) is got
    assert [r.label for r in got.table.rows] == [r.label for r in engine.table.rows]
    assert [r.deviance for r in got.table.rows] == pytest.approx(
        [r.deviance for r in engine.table.rows]
    )
    assert request.hand_labels() == {r.label for r in got.table.rows[-2:]}


@pytest.mark.parametrize(
    "module", ["tui.engine.column_fits", "tui.recodings.decisions", "tui.app.view_state"]
)
def test_new_rooms_load_no_screen_library(module):
    code = (
        f"import sys, {module}\n"
        "print(','.join(m for m in sys.modules if m.split('.')[0] in ('textual', 'rich')))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""

"""The stacked search chooses what fitting one member at a time chooses.

FP1/FP2 powers, hinge knots and indicator cuts are fitted as one stack
(``tui.engine.batch_fit``); the chosen member and its deviance must be those of the
one-at-a-time search, and the stacked log-likelihoods those of statsmodels.
"""

import itertools

import numpy as np
import pytest
import statsmodels.api as sm

from tui.engine.batch_fit import fit_stack
from tui.engine.compare import fit_candidate
from tui.engine.counts import reduce_column
from tui.engine.fitting import fit_logistic
from tui.engine.forms import search as searching
from tui.engine.forms.base import Learned, Recoding, design_matrix, fit_on_counts
from tui.engine.forms.fracpoly import FP2, POWERS, Fp1Candidate, Fp2Candidate
from tui.engine.forms.hinge import HingeCandidate
from tui.engine.forms.indicator import IndicatorCandidate
from tui.engine.forms.search import search_singly, stacked_designs

SEARCHED = (Fp1Candidate, Fp2Candidate, HingeCandidate, IndicatorCandidate)


def _columns(rng):
    n = 6000
    normal = rng.normal(50, 10, n)
    skewed = rng.lognormal(1.0, 0.8, n)
    whole = rng.poisson(4.0, n).astype(float)
    steep = rng.uniform(0, 1, n)
    out = []
    for x, eta in (
        (normal, -1 + 0.004 * (normal - 50) ** 2),
        (skewed, -1.5 + 0.6 * np.log(skewed)),
        (whole, -1 + 0.5 * (whole > 5)),
        (steep, -2 + 8 * steep),  # close to separated at the top
        (normal, np.full(n, -1.0)),  # no effect: many near-ties
    ):
        y = (rng.random(n) < 1 / (1 + np.exp(-eta))).astype(np.int8)
        out.append((x, y))
    return out


def _singly(recodings, counts):
    return Learned(search_singly(recodings, counts), searched=True)


@pytest.mark.parametrize("exact_below", [0, 10**9])  # binned and exact counts
def test_stacked_search_chooses_as_one_at_a_time(rng, monkeypatch, exact_below):
    for x, y in _columns(rng):
        counts = reduce_column(x, y, exact_below=exact_below)
        for make in SEARCHED:
            stacked = fit_candidate(make(), counts)
            with monkeypatch.context() as patch:
                patch.setattr(searching, "_stacked_keys", None)  # any use would fail loudly
                for module in ("fracpoly", "hinge", "indicator"):
                    patch.setattr(f"tui.engine.forms.{module}.learned_by_search", _singly)
                single = fit_candidate(make(), counts)
            assert stacked.recoding == single.recoding, make.__name__
            assert stacked.status == single.status
            if single.status == "ok":
                assert stacked.deviance == pytest.approx(single.deviance, rel=0, abs=1e-8)


def _fp2_members() -> list[Recoding]:
    """Every FP2 power pair on unshifted x."""
    return [
        Recoding(FP2, {"powers": [p1, p2], "shift": 0.0})
        for p1, p2 in itertools.combinations_with_replacement(POWERS, 2)
    ]


def test_stack_log_likelihoods_equal_single_fits_and_statsmodels(rng):
    x, y = _columns(rng)[1]
    counts = reduce_column(x, y, exact_below=10**9)  # exact, so rows and counts agree
    recodings = _fp2_members()
    designs = np.stack([design_matrix(r, counts.x) for r in recodings])
    stack = fit_stack(designs, counts.events, counts.trials)
    assert stack.settled.sum() >= 30
    family = sm.families.Binomial()
    for i in np.flatnonzero(stack.settled):
        single = fit_on_counts(recodings[i], counts)
        assert stack.llf[i] == pytest.approx(single.llf, rel=1e-12, abs=1e-8)
    for i in np.flatnonzero(stack.settled)[::9]:
        # Reference library statsmodels: GLM Binomial on every row of the same design.
        rows = design_matrix(recodings[i], x)
        llf = sm.GLM(y.astype(float), rows, family=family).fit().llf
        assert stack.llf[i] == pytest.approx(llf, rel=1e-9)


def test_unsettled_members_are_left_to_the_single_fit():
    # A separated design: Newton never settles, so the stack hands it back.
    x = np.arange(20.0)
    trials = np.ones(20)
    events = (x >= 10).astype(float)
    design = np.column_stack([np.ones(20), x])
    stack = fit_stack(np.stack([design, design]), events, trials)
    assert not stack.settled.any()
    assert fit_logistic(design, events, trials).separated


@pytest.mark.parametrize("exact_below", [0, 10**9])
def test_stacked_designs_are_the_members_designs_bit_for_bit(rng, exact_below):
    # The kinds build a whole search's designs at once; each must be its design_matrix.
    from tui.engine.forms.fracpoly import FP1
    from tui.engine.forms.hinge import HINGE
    from tui.engine.forms.indicator import INDICATOR

    for x, y in _columns(rng)[:3]:
        counts = reduce_column(x, y, exact_below=exact_below)
        shift = float(max(0.0, 1.0 - counts.x.min()))
        cuts = list(np.quantile(counts.x, [0.1, 0.3, 0.5, 0.9]))
        searches = [
            [Recoding(FP1, {"power": p, "shift": shift}) for p in POWERS],
            [
                Recoding(FP2, {"powers": [p1, p2], "shift": shift})
                for p1, p2 in itertools.combinations_with_replacement(POWERS, 2)
            ],
            [Recoding(HINGE, {"knot": c}) for c in cuts],
            [Recoding(INDICATOR, {"cut": c}) for c in cuts],
            [Recoding(INDICATOR, {"cut": c, "side": "above"}) for c in cuts],
        ]
        for recodings in searches:
            stacked = stacked_designs(recodings, counts.x)
            one_by_one = np.stack([design_matrix(r, counts.x) for r in recodings])
            np.testing.assert_array_equal(stacked, one_by_one)


def test_the_search_fit_is_the_fit_of_the_chosen_member(rng):
    # The chosen member's fit comes from the stack (refined there) or from fitting it
    # alone; either way it is the fit fit_on_counts gives, to the single fit's own
    # convergence (its coefficients settle to about 1e-9 of their size).
    x, y = _columns(rng)[0]
    counts = reduce_column(x, y)
    for make in SEARCHED:
        learned = make().learn(counts)
        assert learned.fit is not None
        again = fit_on_counts(learned.recoding, counts)
        assert learned.fit.llf == pytest.approx(again.llf, rel=1e-12)
        np.testing.assert_allclose(learned.fit.coef, again.coef, rtol=1e-8, atol=0)
        assert learned.fit.ok == again.ok
        assert (learned.fit.n_params, learned.fit.nobs) == (again.n_params, again.nobs)


def test_refined_stack_fits_equal_single_fits_and_statsmodels(rng):
    x, y = _columns(rng)[1]
    counts = reduce_column(x, y, exact_below=10**9)  # exact, so rows and counts agree
    recodings = _fp2_members()
    designs = np.stack([design_matrix(r, counts.x) for r in recodings])
    stack = fit_stack(designs, counts.events, counts.trials, refine_within=np.inf)
    assert stack.refined.sum() >= 30
    family = sm.families.Binomial()
    for i in np.flatnonzero(stack.refined):
        single = fit_on_counts(recodings[i], counts)
        assert single.ok
        assert stack.llf[i] == pytest.approx(single.llf, rel=1e-12)
        np.testing.assert_allclose(stack.coef[i], single.coef, rtol=1e-8, atol=0)
    for i in np.flatnonzero(stack.refined)[::7]:
        # Reference library statsmodels: GLM Binomial on every row, run to a tight
        # deviance tolerance.
        rows = design_matrix(recodings[i], x)
        glm = sm.GLM(y.astype(float), rows, family=family).fit(tol=1e-13, maxiter=200)
        np.testing.assert_allclose(stack.coef[i], glm.params, rtol=1e-7, atol=0)


def test_refining_leaves_a_creeping_member_to_the_single_fit(rng):
    # One pure row at a tiny x: x^-2 singles it out, and the likelihood has no maximum
    # (its coefficient runs to infinity by ever smaller gains). The stack's rule on the
    # log-likelihood calls that settled; refining sees the steps not shrink. (Where the
    # single fit stops on such a member depends on the data, so only the stack is judged.)
    m = 400
    x = rng.uniform(1, 2, m)
    trials = rng.integers(5, 30, m).astype(float)
    events = rng.binomial(trials.astype(int), 0.3).astype(float)
    x[0], events[0], trials[0] = 1e-6, 1.0, 1.0
    design = np.column_stack([np.ones(m), x**-2.0, x])
    assert fit_stack(np.stack([design, design]), events, trials).settled.all()
    stack = fit_stack(np.stack([design, design]), events, trials, refine_within=np.inf)
    assert not stack.settled.any() and not stack.refined.any()


@pytest.mark.parametrize("exact_below", [0, 10**9])
def test_searches_sharing_a_stack_learn_what_each_learns_alone(rng, exact_below):
    # compare_forms fits the searches of one width (FP1 with indicator, FP2 with hinge)
    # as one stack; each must learn the member, status and fit of its own search.
    from tui.engine.forms.registry import default_candidates

    for x, y in _columns(rng):
        counts = reduce_column(x, y, exact_below=exact_below)
        candidates = default_candidates()
        shared = searching.learn_searches(candidates, counts)
        assert {candidates[n].kind for n in shared} == {"fp1", "fp2", "hinge", "indicator"}
        for n, learned in shared.items():
            alone = candidates[n].learn(counts)
            assert learned.recoding == alone.recoding and learned.searched
            fit = (
                learned.fit if learned.fit is not None else fit_on_counts(learned.recoding, counts)
            )
            again = alone.fit if alone.fit is not None else fit_on_counts(alone.recoding, counts)
            assert fit.ok == again.ok
            assert fit.llf == pytest.approx(again.llf, rel=1e-12)
            np.testing.assert_allclose(fit.coef, again.coef, rtol=1e-8, atol=1e-12)

"""Each form kind owns its facts: key, nesting, notes, df, words; tables keyed by form key."""

import ast
import pickle
from pathlib import Path

import numpy as np
import pytest
import statsmodels.api as sm
from scipy import stats

from tui.engine.compare import NOTE_FEW_EVENTS, compare_forms
from tui.engine.counts import reduce_column
from tui.engine.forms import KINDS, RecodingError, default_candidates, make_recoding
from tui.engine.forms.bands import NOTE_BANDS
from tui.engine.forms.base import NOTE_CUT, NOTE_DICHOTOMY, NOTE_POWER
from tui.engine.forms.cutpoints import SEARCH_PERCENTILES, cut_candidates
from tui.engine.forms.hinge import HingeCandidate
from tui.engine.forms.indicator import IndicatorCandidate
from tui.engine.forms.registry import triage_candidates
from tui.engine.recorded import RECORDED_KEY, fit_recoding
from tui.report.words import params_in_words

FORMS_DIR = Path(__file__).resolve().parents[1] / "tui" / "engine" / "forms"


def _logistic(rng, x, logit):
    return (rng.random(x.size) < 1 / (1 + np.exp(-logit))).astype(float)


def test_every_kind_is_registered_under_its_own_key():
    assert list(KINDS) == [
        "linear", "log", "fp1", "fp2", "quadratic", "spline", "hinge", "indicator", "bands",
    ]  # fmt: skip
    assert all(kind.key == key for key, kind in KINDS.items())
    assert {k.label for k in KINDS.values()} >= {"FP1", "FP2"}  # display names, not keys


def test_kind_facts():
    assert {k for k, v in KINDS.items() if v.cut_based} == {"indicator", "bands"}
    assert {k for k, v in KINDS.items() if v.dichotomises} == {"indicator"}
    searched = {k: v.searched_df for k, v in KINDS.items() if v.searched_df}
    assert searched == {"fp1": 1, "fp2": 2, "hinge": 1, "indicator": 1}


@pytest.mark.parametrize(
    "key, params, nests",
    [
        ("linear", {}, True),
        ("log", {"shift": 0.0}, False),
        ("fp1", {"power": 1, "shift": 2.0}, True),
        ("fp1", {"power": 0.5, "shift": 0.0}, False),
        ("fp2", {"powers": [1, 2], "shift": 0.0}, True),
        ("fp2", {"powers": [-2, 1], "shift": 0.0}, True),
        ("fp2", {"powers": [1, 1], "shift": 0.0}, True),  # x and x ln x
        ("fp2", {"powers": [0.5, 2], "shift": 0.0}, False),
        ("quadratic", {}, True),
        ("spline", {"knots": [1.0, 2.0, 3.0]}, True),
        ("hinge", {"knot": 2.0}, True),
        ("indicator", {"cut": 2.0}, False),
        ("bands", {"edges": [1.0, 2.0]}, False),
    ],
)
def test_nests_linear_is_whether_x_is_in_the_outputs_span(key, params, nests, rng):
    # Checked against the definition: x lies in the span of the intercept and the outputs.
    recoding = make_recoding(key, params)
    assert recoding.form.nests_linear(recoding.params) is nests
    x = rng.uniform(0.5, 4.0, 300)
    design = np.column_stack([np.ones(x.size), recoding.apply(x)])
    coef, *_ = np.linalg.lstsq(design, x, rcond=None)
    assert bool(np.allclose(design @ coef, x, atol=1e-8)) is nests


def test_notes_come_from_the_kind():
    assert KINDS["indicator"].notes(searched=True) == [NOTE_CUT, NOTE_DICHOTOMY]
    assert KINDS["indicator"].notes(searched=False) == [NOTE_DICHOTOMY]
    assert KINDS["hinge"].notes(searched=True) == [NOTE_CUT]
    assert KINDS["fp2"].notes(searched=True) == [NOTE_POWER]
    # Bands are several groups, not a dichotomy: their own note.
    assert KINDS["bands"].notes(searched=False) == [NOTE_BANDS]
    assert NOTE_DICHOTOMY not in KINDS["bands"].notes(searched=True)
    assert KINDS["spline"].notes(searched=False) == []


def test_default_table_rows_are_keyed_by_kind_and_hand_values_by_number(rng):
    x = rng.normal(50, 10, 1500)
    counts = reduce_column(x, _logistic(rng, x, (x - 50) / 10))
    extra = [HingeCandidate(knot=48), IndicatorCandidate(cut=55.5)]
    table = compare_forms(counts, default_candidates(5, 3) + extra)
    keys = [r.key for r in table.rows]
    assert keys[:9] == list(KINDS)
    assert keys[9:] == ["hinge@48.0", "indicator@55.5"]
    assert table.row("spline").label == "spline, 3 knots"
    assert table.row("bands").label == "bands, 5 groups"
    assert table.row("hinge@48.0").recoding.params == {"knot": 48.0}
    assert table.row("spline, 3 knots") is None  # labels are for display, not lookup
    assert all(r.kind == r.key.split("@")[0] for r in table.rows)


def test_triage_leaves_out_the_forms_that_fit_many_times():
    kept = [c.key for c in triage_candidates(4, 4, searched=False)]
    assert kept == ["linear", "log", "fp1", "quadratic", "spline", "bands"]
    assert not HingeCandidate(knot=3.0).searches_many_fits  # one fit, nothing searched


def test_recoding_holds_its_kind_and_keeps_value_semantics():
    a = make_recoding("spline", {"knots": [1.0, 2.0, 3.0]}, (0.0, 4.0))
    assert a.kind == "spline" and a.form is KINDS["spline"]
    assert a == make_recoding("spline", {"knots": [1.0, 2.0, 3.0]}, (0.0, 4.0))
    assert a != make_recoding("spline", {"knots": [1.0, 2.0, 3.5]}, (0.0, 4.0))
    back = pickle.loads(pickle.dumps(a))  # worker processes send recodings back
    assert back == a and back.kind == "spline"
    with pytest.raises(RecodingError, match="cubic"):
        make_recoding("cubic", {})


def test_learned_recoding_equals_the_one_read_from_its_key(rng):
    x = rng.gamma(2.0, 3.0, 800)
    counts = reduce_column(x, _logistic(rng, x, np.log(x) - 1))
    for candidate in default_candidates():
        learned = candidate.learn(counts).recoding
        assert learned == make_recoding(learned.kind, dict(learned.params), learned.clip)


def test_words_are_the_kinds_own():
    r = make_recoding("fp2", {"powers": [1, 2], "shift": 1.5}, clip=(0.0, 9.0))
    expected = (
        "fractional polynomial of degree 2: x^1 and x^2 after adding 1.5 to every value"
        "; x first limited to [0, 9]"
    )
    assert params_in_words(r) == r.words() == expected
    hinge = make_recoding("hinge", {"knot": 150})
    assert params_in_words(hinge) == "x and max(x − 150, 0): the slope changes at 150"


def test_recorded_fp2_with_power_one_gets_its_lr_test(rng):
    # Defect: nesting was guessed from the output suffix, so FP2 (1, 2) had no LR p-value.
    # Reference library: statsmodels GLM Binomial fits of [1, x] and [1, x, x²].
    x = rng.uniform(0.5, 6.0, 1500)
    y = _logistic(rng, x, 0.4 * (x - 3) ** 2 - 1)
    counts = reduce_column(x, y)
    table = compare_forms(counts)
    row = fit_recoding(make_recoding("fp2", {"powers": [1, 2], "shift": 0.0}), counts, table.linear)
    assert row.key == RECORDED_KEY
    glm = sm.families.Binomial()
    lin = sm.GLM(y, np.column_stack([np.ones(x.size), x]), family=glm).fit()
    full = sm.GLM(y, np.column_stack([np.ones(x.size), x, x**2]), family=glm).fit()
    chi2 = lin.deviance - full.deviance
    assert row.lr_df == 1
    assert row.lr_chi2 == pytest.approx(chi2, abs=1e-6)
    assert row.lr_p == pytest.approx(stats.chi2.sf(chi2, 1), rel=1e-6)
    # Powers without 1 do not contain x: no test against linear.
    other = fit_recoding(
        make_recoding("fp2", {"powers": [0.5, 2], "shift": 0.0}), counts, table.linear
    )
    assert other.lr_p is None and other.lr_df is None


def test_hinge_searches_the_top_percentile_of_a_continuous_column(rng):
    # Defect: the last cut candidate was dropped, which on a continuous column is the
    # 90th percentile, never the maximum.
    x = rng.uniform(0.0, 100.0, 20000)
    counts = reduce_column(x, np.zeros(x.size))
    top = float(counts.quantile([SEARCH_PERCENTILES[-1]])[0])
    knots = cut_candidates(counts, upper_included=False)
    assert knots[-1] == top < counts.x[-1]
    y = _logistic(rng, x, -2.0 + 0.4 * np.maximum(x - top, 0.0))
    learned = HingeCandidate().learn(reduce_column(x, y))
    assert learned.searched and learned.df == 3
    assert learned.recoding.params["knot"] == pytest.approx(top)


def test_cut_candidates_keep_the_maximum_only_for_a_split_below_it(rng):
    # min(x) < c <= max(x): each c splits the rows into x < c and x >= c, both non-empty.
    # A hinge needs c < max(x) too (max(x - c, 0) is all zeros at the maximum).
    x = np.concatenate([rng.integers(0, 5, 700), np.full(300, 9)]).astype(float)  # 30% at max
    counts = reduce_column(x, (rng.random(x.size) < 0.3).astype(float))
    lo, hi = counts.x[0], counts.x[-1]
    cuts = cut_candidates(counts)
    assert hi in cuts and all(lo < c <= hi for c in cuts)
    inside = cut_candidates(counts, upper_included=False)
    assert inside == [c for c in cuts if c < hi]
    for c in cuts:  # every cut point gives a non-constant indicator
        below = make_recoding("indicator", {"cut": c}).apply(counts.x)[:, 0]
        assert 0 < below.sum() < below.size
    for c in inside:  # every knot gives a hinge column that is not all zeros
        assert make_recoding("hinge", {"knot": c}).apply(counts.x)[:, 1].max() > 0
    assert HingeCandidate().learn(counts).recoding.params["knot"] < hi


def test_few_events_note_is_still_added_after_the_kinds_notes(rng):
    x = rng.normal(size=120)
    y = np.zeros(x.size)
    y[:6] = 1.0
    notes = compare_forms(reduce_column(x, y)).row("indicator").notes
    assert notes == (NOTE_CUT, NOTE_DICHOTOMY, NOTE_FEW_EVENTS)


PACKAGE = "tui.engine.forms"


def _imports(path: Path) -> set[str]:
    """Modules of the forms package that ``path`` imports, at any depth of the file
    (``__init__`` for the package itself)."""
    stems = {p.stem for p in FORMS_DIR.glob("*.py")}

    def module(name: str) -> str | None:
        if name == PACKAGE:
            return "__init__"
        if name.startswith(PACKAGE + "."):
            stem = name[len(PACKAGE) + 1 :].split(".")[0]
            return stem if stem in stems else None
        return None

    found = set()
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.ImportFrom) and node.module:
            found.add(module(node.module))
            if node.module == PACKAGE:  # from tui.engine.forms import registry
                found |= {a.name for a in node.names if a.name in stems}
        elif isinstance(node, ast.Import):
            found |= {module(a.name) for a in node.names}
    return found - {None}


def test_forms_have_no_import_circle():
    graph = {p.stem: _imports(p) - {p.stem} for p in FORMS_DIR.glob("*.py")}
    assert "registry" in graph["__init__"] and "registry" not in graph["base"]
    done: set[str] = set()

    def visit(module: str, path: tuple[str, ...]) -> None:
        assert module not in path, f"import circle: {' -> '.join(path + (module,))}"
        if module in done:
            return
        for used in sorted(graph[module]):
            visit(used, path + (module,))
        done.add(module)

    for module in sorted(graph):
        visit(module, ())

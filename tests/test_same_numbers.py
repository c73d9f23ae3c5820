"""The same decision shows the same numbers in the app, the report, the log and
``bendwise forms``; readings that mislead are said plainly.

Outside references: statsmodels GLM Binomial (the Box–Tidwell interval's standard error);
the 2-AIC rule of thumb for naming a best form is Burnham & Anderson 2002; the Box–Tidwell
check itself is Box & Tidwell 1962.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
import statsmodels.api as sm
from conftest import SAMPLE

from tui.app.widgets.forms_table import SEARCH_DF, lowest_aic, power_words, row_notes
from tui.cli.main import main
from tui.engine.column_fits import CandidateSet, fit_column
from tui.engine.counts import reduce_column
from tui.engine.forms.bands import NOTE_BANDS
from tui.engine.forms.base import NOTE_DICHOTOMY
from tui.engine.forms.hinge import HingeCandidate
from tui.engine.forms.spline import tied_knots_note
from tui.intake.dataset import file_sha256, open_dataset
from tui.recodings.decisions import Design, judged_evidence
from tui.recodings.evidence import DataFingerprint
from tui.recodings.model import Decision, RecodingLog, SourceInfo
from tui.report.content import build_report
from tui.table_rules import ADEQUATE, best_words, names_best

COHORT = SAMPLE / "surgical_cohort.csv"
OUTCOME = "wound_infection_30d"


def _table(column: str, knots: int = 4):
    data = open_dataset(COHORT, OUTCOME)
    counts = reduce_column(data.values(column), data.outcome.y)
    return data, counts, fit_column(counts, CandidateSet(4, knots), smooth=False).table


def test_one_df_rule_in_forms_log_and_report(capsys):
    data, counts, table = _table("operation_minutes")
    hinge = table.row("hinge")
    assert hinge.df == 3  # x, the hinge term, and the searched knot
    design = Design()
    evidence = judged_evidence(hinge, 4, 4, False, None, True, design, DataFingerprint("c", None))
    assert evidence.row.df == hinge.df
    main(
        [
            "forms",
            str(COHORT),
            "--outcome",
            OUTCOME,
            "--column",
            "operation_minutes",
            "--format",
            "json",
        ]
    )
    listed = {r["kind"]: r for r in json.loads(capsys.readouterr().out)}
    assert listed["hinge"]["df"] == hinge.df
    decision = Decision.make(
        "operation_minutes", hinge.recoding, (counts.minimum, counts.maximum), evidence=evidence
    )
    log = RecodingLog(OUTCOME, 1, SourceInfo(COHORT.name, 5000, file_sha256(COHORT)), (decision,))
    report = build_report(log, data)
    forms = report.decisions[0].forms
    accepted = [f for f in forms if f.accepted]
    assert len(accepted) == 1  # once per table, marked
    assert accepted[0].df == hinge.df and accepted[0].delta_aic == pytest.approx(hinge.delta_aic)
    assert len(forms) == len(table.rows)


def test_a_typed_hinge_costs_no_search_df_and_the_app_says_which():
    _, counts, table = _table("operation_minutes")
    typed = fit_column(counts, CandidateSet(4, 4, hinges=(150.0,)), smooth=False).table
    by_hand = typed.row(HingeCandidate(150.0).key)
    assert by_hand.df == 2 and table.row("hinge").df == 3
    assert SEARCH_DF.format(n=1) in row_notes(table.row("hinge"), False)
    assert any("no df for a search" in n for n in row_notes(by_hand, True))
    assert not any(n.startswith("df includes") for n in row_notes(by_hand, True))


def test_tied_knots_are_said(capsys):
    # Smoking pack-years: 45% exact zeros (truth file), so knot quantiles tie.
    _, _, table = _table("smoking_pack_years", knots=5)
    spline = table.row("spline")
    assert len(spline.recoding.params["knots"]) == 4
    assert tied_knots_note(4, 5) in spline.notes
    assert tied_knots_note(4, 5) == "4 knots: 5 asked, tied quantiles"


def test_box_tidwell_interval_matches_statsmodels_and_flags_nonsense():
    # statsmodels GLM Binomial of x and x ln x: the power's half-width is 1.96 se(γ) / |β|.
    data, counts, table = _table("crp_mg_l")
    bt = table.box_tidwell
    x = data.values("crp_mg_l")
    keep = np.isfinite(x)
    z, y = x[keep] + bt.shift, data.outcome.y[keep]
    restricted = sm.GLM(y, sm.add_constant(z), family=sm.families.Binomial()).fit()
    full = sm.GLM(y, np.column_stack([np.ones_like(z), z, z * np.log(z)]),
                  family=sm.families.Binomial()).fit()  # fmt: skip
    power = 1 + full.params[2] / restricted.params[1]
    half = 1.96 * full.bse[2] / abs(restricted.params[1])
    assert bt.power == pytest.approx(power, rel=1e-5)
    assert (bt.low, bt.high) == pytest.approx((power - half, power + half), rel=1e-4)
    assert bt.meaningful and "not meaningful" not in power_words(bt)
    # Sodium is planted as a U (truth file): no power of x can follow it.
    sodium = _table("sodium_mmol_l")[2].box_tidwell
    assert not sodium.meaningful and "not meaningful" in power_words(sodium)
    # Height has no effect: the interval is far too wide to read.
    height = _table("height_cm")[2].box_tidwell
    assert height.why_not() == "interval too wide"


def test_best_named_only_two_aic_units_below_linear():
    # Burnham & Anderson 2002, rule of thumb: less than 2 AIC units is no real difference.
    assert not names_best(-0.3) and not names_best(0.0) and names_best(-2.0)
    assert best_words("log", -0.3) == ADEQUATE and best_words("quadratic", -82.5) == "quadratic"
    _, _, table = _table("height_cm")
    assert table.best().delta_aic > -2 or lowest_aic(table.rows) is not None
    assert lowest_aic(table.rows) is None  # no planted effect: nothing named best
    _, _, bmi = _table("bmi")
    assert lowest_aic(bmi.rows) == "quadratic"


def test_bands_have_their_own_note():
    _, _, table = _table("bmi")
    bands = table.row("bands")
    assert NOTE_BANDS in bands.notes and NOTE_DICHOTOMY not in bands.notes
    assert NOTE_DICHOTOMY in table.row("indicator").notes


def test_the_indicator_side_is_the_analysts_and_replay_and_sql_follow(tmp_path):
    # Worked by hand: cut 2, side above gives 1 for x >= 2; an older log (no side) is below.
    import duckdb
    import pandas as pd

    from tui import recodings
    from tui.engine.forms import make_recoding

    above = make_recoding("indicator", {"cut": 2.0, "side": "above"})
    below = make_recoding("indicator", {"cut": 2.0})
    x = np.array([1.0, 2.0, 3.0])
    assert above.apply(x)[:, 0].tolist() == [0.0, 1.0, 1.0]
    assert below.apply(x)[:, 0].tolist() == [1.0, 0.0, 0.0]
    assert above.describe() == "indicator x ≥ 2" and above.suffixes() == ["above"]
    log = RecodingLog(
        "y", 1, SourceInfo("t.csv", 3, "0" * 64),
        (Decision.make("x", above, (1.0, 3.0)), Decision.make("z", below, (1.0, 3.0))),
    )  # fmt: skip
    path = tmp_path / "log.json"
    recodings.save(log, path)
    again = recodings.load(path)
    assert again.decisions[0].recoding.params == {"cut": 2.0, "side": "above"}
    assert again.decisions[1].recoding.params == {"cut": 2.0}  # older logs: below
    frame = pd.DataFrame({"x": x, "z": x})
    replayed = recodings.apply_to_frame(again, frame)
    assert replayed["x__above"].tolist() == [0.0, 1.0, 1.0]
    sql = recodings.to_sql(again, "duckdb", table="t")
    con = duckdb.connect()
    con.register("t", frame)
    out = con.execute(sql).df()
    assert out["x__above"].tolist() == [0.0, 1.0, 1.0] and out["z__below"].tolist() == [
        1.0,
        0.0,
        0.0,
    ]
    bad = path.read_text().replace('"side": "above"', '"side": "left"')
    with pytest.raises(recodings.LogProblem, match="side"):
        recodings.loads(bad, "l.json")


def test_both_sides_fit_alike_with_the_sign_turned():
    _, counts, _ = _table("hba1c_pct")
    below = fit_column(counts, CandidateSet(4, 4), smooth=False).table.row("indicator")
    above = fit_column(counts, CandidateSet(4, 4, side="above"), smooth=False).table.row(
        "indicator"
    )
    assert above.recoding.params["side"] == "above"
    assert above.recoding.params["cut"] == below.recoding.params["cut"]
    assert above.deviance == pytest.approx(below.deviance, abs=1e-8)
    assert above.form_coef[0] == pytest.approx(-below.form_coef[0], rel=1e-6)

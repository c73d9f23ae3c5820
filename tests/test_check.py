"""``bendwise check LOG DATA``: does each logged choice hold on a later extract?

The sample cohort's planted shapes come from its truth file (sample_data/planted_shapes.json):
bends planted in bmi, sodium, operation minutes, CRP and creatinine hold on the fresh
extract; height has no effect. The drift figure is the population stability index over
the training deciles (common practice in credit-risk monitoring; its 0.25 threshold is
from memory). The fresh-data comparison is checked against statsmodels GLM Binomial.
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from conftest import SAMPLE

from tui import recodings
from tui.cli.main import main
from tui.engine.column_fits import CandidateSet, fit_column
from tui.engine.counts import reduce_column
from tui.engine.drift import stability_index, training_deciles
from tui.intake.dataset import file_sha256, open_dataset
from tui.recodings.model import Decision, RecodingLog, SetAside, SourceInfo

TRAINING = SAMPLE / "surgical_cohort.csv"
FRESH = SAMPLE / "surgical_cohort_fresh.csv"
OUTCOME = "wound_infection_30d"
PLANTED = {
    "bmi": "quadratic",
    "sodium_mmol_l": "quadratic",
    "operation_minutes": "hinge",
    "crp_mg_l": "log",
    "creatinine_umol_l": "spline",
}
KEYS = {
    "column",
    "kind",
    "verdict",
    "delta_aic",
    "lr_chi2",
    "lr_df",
    "lr_p",
    "psi",
    "outside_range",
}


def learned_log(choices: dict[str, str], deciles: bool = True) -> RecodingLog:
    """A log learned on the training cohort: each column's candidate row of that key."""
    data = open_dataset(TRAINING, OUTCOME)
    decisions = []
    for column, key in choices.items():
        x = data.values(column)
        counts = reduce_column(x, data.outcome.y)
        row = fit_column(counts, CandidateSet(4, 4), smooth=False).table.row(key)
        decisions.append(
            Decision.make(
                column,
                row.recoding,
                (counts.minimum, counts.maximum),
                evidence={"form": row.label, "df": row.df},
                deciles=training_deciles(x) if deciles else None,
            )
        )
    source = SourceInfo(TRAINING.name, 5000, file_sha256(TRAINING))
    return RecodingLog(OUTCOME, 1, source, tuple(decisions), (SetAside("record_id", "an id"),))


def run_check(tmp_path, log: RecodingLog, data=FRESH, *extra: str) -> tuple[int, list[dict]]:
    path = tmp_path / "log.json"
    recodings.save(log, path)
    out = tmp_path / "check.json"
    code = main(["check", str(path), str(data), "--format", "json", "--output", str(out), *extra])
    return code, json.loads(out.read_text())


def test_planted_bends_hold_on_the_fresh_extract(tmp_path):
    log = learned_log({**PLANTED, "age_years": "linear"})
    code, rows = run_check(tmp_path, log)
    assert code == 0
    by_column = {r["column"]: r for r in rows}
    assert all(set(r) >= KEYS for r in rows)
    for column in PLANTED:
        assert by_column[column]["verdict"] == "holds", column
        assert by_column[column]["delta_aic"] <= -2
    assert by_column["crp_mg_l"]["lr_p"] is None  # log does not nest linear
    # Kept linear and set aside: listed, no verdict.
    assert by_column["age_years"]["verdict"] is None and by_column["age_years"]["psi"] < 0.1
    assert by_column["record_id"]["kind"] == "set aside"


def test_the_fresh_comparison_equals_statsmodels(tmp_path):
    # statsmodels GLM Binomial on the fresh rows, the log's quadratic held fixed.
    log = learned_log({"bmi": "quadratic"})
    _, rows = run_check(tmp_path, log)
    frame = pd.read_csv(FRESH)
    x = frame["bmi"].to_numpy(float)
    y = frame[OUTCOME].to_numpy(float)
    keep = np.isfinite(x)
    x, y = x[keep], y[keep]
    lin = sm.GLM(y, sm.add_constant(x), family=sm.families.Binomial()).fit()
    quad = sm.GLM(
        y, np.column_stack([np.ones_like(x), x, x**2]), family=sm.families.Binomial()
    ).fit()
    assert rows[0]["delta_aic"] == pytest.approx(quad.aic - lin.aic, abs=1e-5)
    assert rows[0]["lr_chi2"] == pytest.approx(2 * (quad.llf - lin.llf), abs=1e-5)
    assert rows[0]["lr_df"] == 1


def test_a_spurious_recoding_of_a_no_effect_column_does_not_hold(tmp_path):
    log = learned_log({"height_cm": "spline"})
    code, rows = run_check(tmp_path, log, FRESH, "--strict")
    assert rows[0]["verdict"] in ("weaker", "not better")
    assert code == 1  # --strict: a verdict other than holds


def test_a_shifted_column_shows_drift(tmp_path):
    frame = pd.read_csv(FRESH)
    frame["bmi"] = frame["bmi"] + 6.0
    shifted = tmp_path / "shifted.csv"
    frame.to_csv(shifted, index=False)
    log = learned_log({"bmi": "quadratic"})
    _, rows = run_check(tmp_path, log, shifted)
    assert rows[0]["psi"] > 0.25 and rows[0]["drift"] is True
    assert rows[0]["outside_range"] > 0
    assert main(["check", str(tmp_path / "log.json"), str(shifted)]) == 0


def test_a_log_without_deciles_says_drift_not_available(tmp_path, capsys):
    log = learned_log({"bmi": "quadratic"}, deciles=False)
    _, rows = run_check(tmp_path, log)
    assert rows[0]["psi"] is None and rows[0]["drift"] is None
    main(["check", str(tmp_path / "log.json"), str(FRESH)])
    out = capsys.readouterr().out
    assert "ΔAIC ≤ −2" in out and "keeps no training deciles" in out


def test_stability_index_worked_by_hand():
    # Training deciles 1..9 of 0..10; fresh values all in the top group: the index is
    # (1 - 0.1) ln(1 / 0.1) + 9 (1e-4 - 0.1) ln(1e-4 / 0.1), the 1e-4 floor for empty groups.
    deciles = tuple(float(v) for v in range(1, 10))
    fresh = np.full(50, 9.5)
    expected = 0.9 * np.log(10) + 9 * (1e-4 - 0.1) * np.log(1e-4 / 0.1)
    assert stability_index(deciles, fresh) == pytest.approx(expected)
    same = np.linspace(0, 10, 100_001)
    assert stability_index(training_deciles(same), same) == pytest.approx(0.0, abs=1e-6)


def test_a_column_the_extract_lacks_is_named(tmp_path, capsys):
    log = learned_log({"bmi": "quadratic"})
    path = tmp_path / "log.json"
    recodings.save(log, path)
    frame = pd.read_csv(FRESH).drop(columns=["bmi"])
    lacking = tmp_path / "lacking.csv"
    frame.to_csv(lacking, index=False)
    assert main(["check", str(path), str(lacking)]) == 2
    assert "lacks column(s) the log recodes: bmi;" in capsys.readouterr().err


def test_a_renamed_column_is_named_beside_the_one_the_extract_lacks(tmp_path, capsys):
    # The fresh sample extract calls albumin serum_albumin_g_l (see sample_data/README.md).
    log = learned_log({"albumin_g_l": "log"})
    path = tmp_path / "log.json"
    recodings.save(log, path)
    assert main(["check", str(path), str(FRESH)]) == 2
    err = capsys.readouterr().err
    assert "lacks column(s) the log recodes: albumin_g_l (closest: serum_albumin_g_l);" in err
    assert "--rename OLD=NEW" in err and err.count("\n") == 1
    assert (
        main(["report", str(path), "--data", str(FRESH), "--output", str(tmp_path / "r.md")]) == 2
    )
    err = capsys.readouterr().err
    assert "lacks column(s) the log recodes: albumin_g_l (closest: serum_albumin_g_l)" in err
    assert not (tmp_path / "r.md").exists()


def test_a_filled_recoding_is_checked_on_every_row_with_its_indicator():
    # Reference library: statsmodels GLM Binomial on the rows as the log codes them (x filled,
    # the missing indicator in both the quadratic and the linear fit).
    from tui.engine.forms import MissingFill, make_recoding
    from tui.recodings.check import check_decision

    rng = np.random.default_rng(7)
    x = rng.normal(0.0, 1.0, 3000)
    absent = rng.uniform(size=x.size) < 0.2
    logit = -1.0 + 0.8 * x**2 + np.where(absent, 1.5, 0.0)
    y = (rng.uniform(size=x.size) < 1 / (1 + np.exp(-logit))).astype(float)
    x[absent] = np.nan
    recoding = make_recoding("quadratic", {}, missing=MissingFill(0.0, True))
    decision = Decision.make("x", recoding, (-3.5, 3.5))
    checked = check_decision(decision, x, y)
    filled = np.where(absent, 0.0, x)
    ind = absent.astype(float)
    quad = sm.GLM(y, np.column_stack([np.ones_like(x), ind, filled, filled**2]),
                  family=sm.families.Binomial()).fit()  # fmt: skip
    line = sm.GLM(y, np.column_stack([np.ones_like(x), ind, filled]),
                  family=sm.families.Binomial()).fit()  # fmt: skip
    assert checked.delta_aic == pytest.approx(quad.aic - line.aic, rel=1e-6)
    assert checked.verdict == "holds"

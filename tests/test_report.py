"""``bendwise report``: golden files, the small-cell rule, HTML safety and bad input.

After a deliberate change of the report, rewrite its golden files with
``BENDWISE_UPDATE_GOLDEN=1 pytest tests/test_report.py`` and review the diff.
"""

import re
from datetime import UTC, datetime

import numpy as np
import pandas as pd
import pytest
from conftest import GOLDEN, SAMPLE, UPDATE_GOLDEN, run_cli

from tui import recodings
from tui.engine.counts import reduce_column
from tui.engine.forms import make_recoding
from tui.engine.forms.spline import SplineCandidate
from tui.intake.dataset import file_sha256, open_dataset
from tui.recodings.model import Decision, RecodingLog, SetAside, SourceInfo
from tui.report import build_report, render_html, render_markdown

COHORT = SAMPLE / "surgical_cohort.csv"
FIXED_NOW = datetime(2026, 1, 15, 9, 30, tzinfo=UTC)
DATED = re.compile(r"^(<p>)?Written .* by bendwise .*$", re.M)
SVG = re.compile(r"<svg\b.*?</svg>", re.S)


def _sample_log() -> RecodingLog:
    data = open_dataset(COHORT, "wound_infection_30d")

    def rng_of(col):
        v = data.values(col)
        return (float(np.nanmin(v)), float(np.nanmax(v)))

    counts = reduce_column(data.values("creatinine_umol_l"), data.outcome.y)
    spline = SplineCandidate(4).learn(counts).recoding
    stamp = "2026-01-10T08:00:00+00:00"
    quadratic, linear = make_recoding("quadratic"), make_recoding("linear")
    decisions = [
        Decision.make("bmi", quadratic, rng_of("bmi"), "U-shape, lowest near 27",
                      {"score": 79.6, "groups": 4, "knots": 4, "bendwise_version": "0.1.0"},
                      decided_by="analyst-1"),
        Decision.make("hba1c_pct", make_recoding("indicator", {"cut": 6.5}), rng_of("hba1c_pct"),
                      "diagnostic threshold", {"groups": 10}),
        Decision.make("creatinine_umol_l", spline, rng_of("creatinine_umol_l"), "", {"knots": 4}),
        Decision.make("age_years", linear, rng_of("age_years"), "looks linear"),
    ]  # fmt: skip
    decisions = [Decision(**{**d.__dict__, "decided_at": stamp}) for d in decisions]
    return RecodingLog(
        outcome_column="wound_infection_30d",
        event=1,
        source=SourceInfo(COHORT.name, 5000, file_sha256(COHORT)),
        decisions=tuple(decisions),
        set_aside=(SetAside("record_id", "row number, not a measurement", stamp),),
        written_by="bendwise 0.1.0",
    )


@pytest.fixture(scope="module")
def sample_report():
    data = open_dataset(COHORT, "wound_infection_30d")
    return build_report(_sample_log(), data, min_cell=10, now=FIXED_NOW)


@pytest.mark.parametrize("name, render", [("report_sample.md", render_markdown),
                                          ("report_sample.html", render_html)])  # fmt: skip
def test_golden_report(sample_report, name, render):
    # The pictures are matplotlib's drawing (its own output may change between releases):
    # the golden file holds everything else; test_report_svg checks the pictures.
    text = SVG.sub("<svg>(picture)</svg>", render(sample_report))
    golden = GOLDEN / name
    if UPDATE_GOLDEN:  # regenerate on purpose, then review the diff
        golden.write_text(text)
    assert text == golden.read_text()


def test_html_has_no_script_and_no_external_url(sample_report):
    html = render_html(sample_report).lower()
    assert "<script" not in html
    assert "http://" not in html and "https://" not in html and "src=" not in html
    assert "<svg" in html


def test_report_names_every_caution_and_the_rule(sample_report):
    md = render_markdown(sample_report)
    for caution in sample_report.cautions:
        assert caution in md
    assert "No count below 10 is printed" in md
    assert "record_id" in md  # set aside, with its note


def test_min_cell_hides_a_group_of_seven(tmp_path):
    # Quartile edges fall at 1.75, 2.5 and 3, so the 7 rows at x = 4 form the top group.
    rng = np.random.default_rng(3)
    x = np.repeat([1.0, 2.0, 3.0, 4.0], [100, 100, 193, 7])
    y = (rng.random(400) < 0.4).astype(int)
    path = tmp_path / "small.csv"
    pd.DataFrame({"x": x, "y": y}).to_csv(path, index=False)
    data = open_dataset(path, "y")
    log = RecodingLog(
        "y", 1, SourceInfo(path.name, 400, file_sha256(path)),
        (Decision.make("x", make_recoding("linear", {}), (1.0, 4.0), "", {"groups": 4}),),
    )  # fmt: skip
    report = build_report(log, data, min_cell=10)
    top = report.decisions[0].groups[-1]
    assert top.n == "<10"
    assert top.logit is None and top.median is None
    assert top.events.startswith("<10") or top.events == "withheld"
    md = render_markdown(report)
    assert "| 4 | – | <10 |" in md


def test_cli_report_is_reproducible_but_for_the_dated_line(tmp_path):
    log_path = tmp_path / "cohort.recodings.json"
    recodings.save(_sample_log(), log_path)
    outs = []
    for i in range(2):
        target = tmp_path / f"r{i}.md"
        done = run_cli("report", str(log_path), "--data", str(COHORT), "--output", str(target))
        assert done.returncode == 0, done.stderr
        outs.append(DATED.sub("", target.read_text()))
    assert outs[0] == outs[1]
    golden = DATED.sub("", (GOLDEN / "report_sample.md").read_text())
    assert outs[0] == golden


def test_cli_report_data_without_a_logged_column(tmp_path):
    log_path = tmp_path / "cohort.recodings.json"
    recodings.save(_sample_log(), log_path)
    fresh = SAMPLE / "surgical_cohort_fresh.csv"
    target = tmp_path / "r.html"
    log = _sample_log()
    renamed = log.with_decision(
        Decision.make("albumin_g_l", make_recoding("linear", {}), (18.0, 55.0))
    )
    recodings.save(renamed, log_path)
    done = run_cli("report", str(log_path), "--data", str(fresh), "--output", str(target))
    assert done.returncode == 2
    assert "albumin_g_l" in done.stderr and "Traceback" not in done.stderr
    assert len(done.stderr.strip().splitlines()) == 1
    assert not target.exists()


def test_cli_report_needs_md_or_html(tmp_path):
    done = run_cli("report", "x.json", "--data", str(COHORT), "--output", str(tmp_path / "r.pdf"))
    assert done.returncode == 2 and ".md or .html" in done.stderr


def test_adjusted_weighted_decision_is_recomputed_the_same_way(tmp_path):
    # The accepted form's deviance equals a direct statsmodels fit with the covariate in its
    # accepted form and frequency weights (reference library: statsmodels GLM Binomial).
    import statsmodels.api as sm

    rng = np.random.default_rng(11)
    n = 1500
    age = rng.uniform(20, 80, n)
    dose = rng.gamma(2.0, 2.0, n)
    w = rng.integers(1, 4, n)
    eta = -2 + 0.02 * (age - 50) + np.log(dose)
    y = (rng.random(n) < 1 / (1 + np.exp(-eta))).astype(int)
    path = tmp_path / "doses.csv"
    pd.DataFrame({"age": age, "dose": dose, "w": w, "y": y}).to_csv(path, index=False)
    data = open_dataset(path, "y")
    age_form = make_recoding("quadratic", {})
    log = RecodingLog(
        "y", 1, SourceInfo(path.name, n, file_sha256(path)),
        (
            Decision.make("age", age_form, (20.0, 80.0)),
            Decision.make("dose", make_recoding("log", {"shift": 0.0}), (0.0, 1.0), "",
                          {"adjusted_for": ["age"], "weight": "w"}),
        ),
    )  # fmt: skip
    report = build_report(log, data, weight="w")
    accepted = next(f for f in report.decisions[1].forms if f.accepted)  # shown once
    frame = pd.read_csv(path)
    X = np.column_stack([np.ones(n), frame.age, frame.age**2, np.log(frame.dose)])
    ref = sm.GLM(frame.y, X, family=sm.families.Binomial(), freq_weights=frame.w).fit()
    assert accepted.deviance == pytest.approx(ref.deviance, abs=1e-6)
    assert "w (frequency), used here" in report.summary["weights"]
    assert report.summary["adjusted for"] == "age"


def test_survey_weighted_report_names_the_robust_wald_and_approximate_lr(tmp_path):
    # The design-based score itself is checked against statsmodels in test_survey_wald.py;
    # here the report says which statistic it shows and that its LR p is approximate.
    rng = np.random.default_rng(12)
    n = 1200
    dose = rng.gamma(2.0, 2.0, n).round(1)
    w = rng.lognormal(0.0, 0.7, n)
    y = (rng.random(n) < 1 / (1 + np.exp(-(-2 + np.log(dose))))).astype(int)
    path = tmp_path / "doses.csv"
    pd.DataFrame({"dose": dose, "w": w, "y": y}).to_csv(path, index=False)
    data = open_dataset(path, "y")
    evidence = {"score": 9.5, "score_df": 2, "score_statistic": "Wald (robust)",
                "weight": "w", "weight_kind": "survey"}  # fmt: skip
    log = RecodingLog(
        "y", 1, SourceInfo(path.name, n, file_sha256(path)),
        (Decision.make("dose", make_recoding("log", {"shift": 0.0}), (0.0, 1.0), "", evidence),),
    )  # fmt: skip
    report = build_report(log, data, weight="w", weight_kind="survey")
    assert report.summary["score statistic"] == "Wald (robust)"
    assert "robust (sandwich) Wald test" in report.intro
    text = render_markdown(report)
    assert "score statistic Wald (robust)" in text
    assert "LR p and ΔAIC approximate: survey weights, sampling design ignored" in text
    assert "LR p and ΔAIC approximate" in render_html(report)

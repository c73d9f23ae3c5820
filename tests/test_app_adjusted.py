"""The review app with covariates and weights: --adjust and --weight in every fit, the
working-model re-score key, the list saying what each score is adjusted for, and the
adjustment recorded with every decision."""

from __future__ import annotations

import asyncio
import threading
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from app_fleet import OUTCOME, WEIGHT, quick_scanner, settle, write_fleet, write_weighted_fleet

from tui import recodings
from tui.app.app import ReviewApp
from tui.app.basis import Basis
from tui.app.fit_cache import FitCache, FitRequest
from tui.app.screens.inspect import InspectScreen
from tui.app.session import ReviewSession, open_session
from tui.app.widgets.forms_table import FormsTable
from tui.app.widgets.line import Line
from tui.app.widgets.triage_table import TriageTable
from tui.engine.adjust import open_adjustment
from tui.engine.runner import scan_columns
from tui.engine.scan import rank

SIZE = (80, 24)
LOG = "fleet.recodings.json"


@pytest.fixture
def folder(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    monkeypatch.chdir(tmp_path)
    write_fleet(tmp_path)
    write_weighted_fleet(tmp_path)
    return tmp_path


def adjusted_session(folder: Path) -> ReviewSession:
    """Adjusted for the stop count and the region (text: indicators), frequency weights."""
    return open_session(
        folder / "fleet_w.csv", OUTCOME, log_path=LOG, adjust=["stops", "region"], weight=WEIGHT
    )


def text_of(screen, selector: str) -> str:
    return str(screen.query_one(selector, Line).render())


def cells(table: TriageTable, column: str) -> list[str]:
    return [c.plain.strip() for c in table.get_row(column)]


def header(table: TriageTable) -> list[str]:
    return [c.label.plain.strip() for c in table.columns.values()]


async def open_column(pilot, column: str) -> InspectScreen:
    table = pilot.app.screen.query_one(TriageTable)
    table.move_to_key(column)
    await pilot.press("enter")
    await settle(pilot)
    assert isinstance(pilot.app.screen, InspectScreen)
    return pilot.app.screen


def test_adjust_and_weight_reach_every_fit(folder: Path) -> None:
    session = adjusted_session(folder)
    data = session.dataset
    assert WEIGHT not in session.columns  # the weight is never reviewed itself
    direct = open_adjustment(data, OUTCOME, ["stops", "region"], WEIGHT, "frequency")
    expected = {
        s.column: s
        for s in rank(
            scan_columns(session.columns, data.raw_values, data.outcome.y, workers=1, adjust=direct)
        )
    }

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            for scan in session.ranked:
                assert scan.score == expected[scan.column].score
                assert scan.weight == WEIGHT
            assert session.scan_of("route_km").adjusted_for == ("stops", "region")
            assert session.scan_of("stops").adjusted_for == ("region",)  # never itself
            table = app.screen.query_one(TriageTable)
            assert "adj" in header(table)
            assert "+2" in cells(table, "route_km") and "+1" in cells(table, "stops")
            table.move_to_key("route_km")
            await pilot.pause()
            assert "score adjusted for stops, region" in text_of(app.screen, "#detail")
            assert f"weights {WEIGHT}" in text_of(app.screen, "#summary")
            zero = int((pd.read_csv(folder / "fleet_w.csv")[WEIGHT] == 0).sum())
            assert f"{zero} rows weigh 0" in text_of(app.screen, "#scanned")

            screen = await open_column(pilot, "route_km")
            fits = screen.fits
            assert fits.request.basis == session.base
            spline = fits.table.row("spline")
            assert spline.lr_chi2 == pytest.approx(session.scan_of("route_km").score, abs=1e-9)
            assert "(unadjusted)" in text_of(screen, "#legend")  # the group logits
            words = text_of(screen, "#adjusted")  # short screen: names only
            assert words == f"adjusted for stops, region; frequency weights {WEIGHT}"
            await pilot.resize_terminal(120, 40)
            await pilot.pause()
            words = text_of(screen, "#adjusted")  # tall screen: how each entered
            assert "adjusted for stops (linear), region (indicators" in words
            assert f"frequency weights {WEIGHT}" in words and "covariates' means" in words

    asyncio.run(go())

    # Reference library: statsmodels GLM (Binomial) with the same covariates and
    # freq_weights gives the linear row's deviance.
    frame = pd.read_csv(folder / "fleet_w.csv")
    kept = frame[frame[WEIGHT] > 0]
    design = np.column_stack(
        [
            np.ones(len(kept)),
            kept["stops"],
            kept["region"] == "north",
            kept["region"] == "south",
            kept["route_km"],
        ]
    ).astype(float)
    glm = sm.GLM(
        kept[OUTCOME].to_numpy(float),
        design,
        family=sm.families.Binomial(),
        freq_weights=kept[WEIGHT].to_numpy(float),
    ).fit()
    cache = FitCache(data, session.settings.max_levels, session.adjustment)
    linear = cache.fits(FitRequest("route_km", 4, 4, basis=session.base)).table.linear
    assert linear.deviance == pytest.approx(glm.deviance, rel=1e-8)


def test_the_fit_cache_keeps_each_adjustment_apart(folder: Path) -> None:
    session = adjusted_session(folder)
    cache = FitCache(session.dataset, session.settings.max_levels, session.adjustment)
    plain = cache.fits(FitRequest("route_km", 4, 4))
    adjusted = cache.fits(FitRequest("route_km", 4, 4, basis=session.base))
    assert FitRequest("route_km", 4, 4) != FitRequest("route_km", 4, 4, basis=session.base)
    assert plain.counts.covariates is None and adjusted.counts.covariates is not None
    assert plain.table.linear.deviance != pytest.approx(adjusted.table.linear.deviance)
    assert cache.fits(FitRequest("route_km", 4, 4, basis=session.base)) is adjusted


def test_working_model_rescore_fills_adjusted_scores(folder: Path) -> None:
    session = open_session(folder / "fleet.csv", OUTCOME, log_path=LOG)
    cache = FitCache(session.dataset, session.settings.max_levels)
    quadratic = cache.fits(FitRequest("route_km", 4, 4)).table.row("quadratic")
    session.accept("route_km", quadratic, 4, 4)
    session.accept("stops", cache.fits(FitRequest("stops", 4, 4)).table.linear, 4, 4)
    session.set_aside("depot_code")  # set aside: stays out of the working model
    undecided = ["parcel_kg", "van_age_years", "depot_temp_c", "night_shift"]
    assert session.undecided() == undecided

    data = session.dataset
    forms = {"route_km": quadratic.recoding}
    model = open_adjustment(data, OUTCOME, ["route_km", "stops"], forms=forms)
    expected = {
        s.column: s.score
        for s in scan_columns(undecided, data.raw_values, data.outcome.y, workers=1, adjust=model)
    }
    release = threading.Event()

    def held_scanner(columns, values_of, y, settings, *, adjust=None):
        for i, result in enumerate(quick_scanner(columns, values_of, y, settings, adjust=adjust)):
            if adjust is not None and i == 1:
                release.wait(timeout=30)
            yield result

    async def go() -> None:
        app = ReviewApp(session, held_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            table = app.screen.query_one(TriageTable)
            assert "adj" not in header(table)  # nothing adjusted yet
            assert "m: working model" in text_of(app.screen, "#summary")
            await pilot.press("m")
            for _ in range(100):
                await pilot.pause(0.05)
                if "1/4 undecided re-scored" in text_of(app.screen, "#scanned"):
                    break
            assert "1/4 undecided re-scored in the working model" in text_of(app.screen, "#scanned")
            assert app.screen.query_one("#scan-bar").display
            await pilot.press("s")  # the list answers keys while the re-score runs
            assert app.screen.sort == "name"
            await pilot.press("m")  # one re-score at a time
            await pilot.pause()
            assert any("scan is running" in n.message for n in app._notifications)
            release.set()
            await settle(pilot)

            assert "4 undecided re-scored in the working model (2 columns)" in text_of(
                app.screen, "#scanned"
            )
            for column in undecided:
                scan = session.scan_of(column)
                assert scan.adjusted_for == ("route_km", "stops")
                assert scan.score == pytest.approx(expected[column], abs=1e-9)
            assert session.scan_of("route_km").adjusted_for == ()  # decided: kept as it was
            assert "+2" in cells(table, "parcel_kg")
            assert "-" in cells(table, "route_km")
            table.move_to_key("parcel_kg")
            await pilot.pause()
            assert "score adjusted for route_km, stops" in text_of(app.screen, "#detail")
            assert "u: first scores" in text_of(app.screen, "#summary")

            # The candidate table uses the design of the score shown.
            screen = await open_column(pilot, "parcel_kg")
            basis = session.basis_of("parcel_kg")
            assert screen.fits.request.basis == basis
            assert basis.forms[0][0] == "route_km"  # entered in its accepted form
            spline = screen.fits.table.row("spline")
            assert spline.lr_chi2 == pytest.approx(session.scan_of("parcel_kg").score, abs=1e-9)
            assert "adjusted for route_km, stops" in text_of(screen, "#adjusted")
            screen.query_one(FormsTable).move_to_key("spline")
            await pilot.pause()
            await pilot.press("a", "enter")
            evidence = recodings.load_log(folder / LOG).decision_for("parcel_kg").evidence
            assert evidence["adjusted_for"] == ["route_km", "stops"]
            assert evidence["score"] == pytest.approx(expected["parcel_kg"])
            assert evidence["weight"] is None and evidence["weight_kind"] is None

            # Back to the first scan: the fits follow the score shown.
            await pilot.press("]")
            await settle(pilot)
            await pilot.press("escape")
            await pilot.press("u")
            await settle(pilot)
            assert all(s.adjusted_for == () for s in session.ranked)
            assert "adj" not in header(table)
            assert "7/7 columns scanned" in text_of(app.screen, "#scanned")

    asyncio.run(go())


def test_inspection_follows_a_rescore_of_its_column(folder: Path) -> None:
    session = open_session(folder / "fleet.csv", OUTCOME, log_path=LOG)
    cache = FitCache(session.dataset, session.settings.max_levels)
    session.accept("route_km", cache.fits(FitRequest("route_km", 4, 4)).table.linear, 4, 4)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "parcel_kg")
            assert screen.fits.request.basis == Basis()
            assert not screen.query_one("#adjusted").display
            app.score_in_working_model()  # as if m was pressed before the column was opened
            await settle(pilot)
            assert screen.fits.request.basis == session.basis_of("parcel_kg") != Basis()
            assert screen.query_one("#adjusted").display
            assert "adjusted for route_km" in text_of(screen, "#adjusted")

    asyncio.run(go())


def test_weight_and_adjustment_go_into_the_evidence(folder: Path) -> None:
    session = adjusted_session(folder)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "route_km")
            screen.query_one(FormsTable).move_to_key("quadratic")
            await pilot.pause()
            await pilot.press("a", "enter", "escape", "L")
            assert "judged adjusted for stops, region" in text_of(app.screen, "#detail")

    asyncio.run(go())
    decision = recodings.load_log(folder / LOG).decision_for("route_km")
    assert decision.evidence["adjusted_for"] == ["stops", "region"]
    assert decision.evidence["weight"] == WEIGHT
    assert decision.evidence["weight_kind"] == "frequency"
    assert "region (indicators" in decision.evidence["adjustment"]
    # Replay reads the recoding only: the same columns as the form applied by itself.
    x = pd.read_csv(folder / "fleet_w.csv")[["route_km"]]
    replayed = recodings.apply_to_frame(recodings.load_log(folder / LOG), x)
    applied = decision.recoding.apply(x["route_km"].to_numpy(float))
    assert np.allclose(replayed[list(decision.outputs)].to_numpy(), applied)


def test_an_accepted_covariate_enters_in_its_form_at_the_next_start(folder: Path) -> None:
    session = adjusted_session(folder)
    cache = FitCache(session.dataset, session.settings.max_levels, session.adjustment)
    fits = cache.fits(FitRequest("stops", 4, 4, basis=session.base))
    session.accept("stops", fits.table.row("quadratic"), 4, 4, basis=session.base)
    again = adjusted_session(folder)
    assert dict(again.base.forms).keys() == {"stops"}
    assert "stops (quadratic)" in again.describe_basis("route_km")


def test_evidence_of_a_row_from_another_design_leaves_the_score_out(folder: Path) -> None:
    session = adjusted_session(folder)
    data = session.dataset
    session.ranked = rank(
        scan_columns(
            session.columns,
            data.raw_values,
            data.outcome.y,
            workers=1,
            adjust=session.adjustment(session.base),
        )
    )
    session.scan_finished = True
    cache = FitCache(data, session.settings.max_levels, session.adjustment)
    plain = cache.fits(FitRequest("route_km", 4, 4)).table.row("quadratic")
    evidence = session.evidence("route_km", plain, 4, 4, False, Basis())
    assert evidence["score"] is None and evidence["adjusted_for"] == []
    assert evidence["adjustment"] == "unadjusted" and evidence["weight"] is None
    adjusted = cache.fits(FitRequest("route_km", 4, 4, basis=session.base)).table.row("quadratic")
    evidence = session.evidence("route_km", adjusted, 4, 4, False, session.base)
    assert evidence["score"] == pytest.approx(session.scan_of("route_km").score)


def test_the_working_model_key_says_why_it_cannot_start(folder: Path) -> None:
    async def go() -> None:
        session = open_session(folder / "fleet.csv", OUTCOME, log_path=LOG)
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            await pilot.press("m", "u")
            await pilot.pause()
            messages = [n.message for n in app._notifications]
            assert any("working model is empty" in m for m in messages)
            assert any("already shown" in m for m in messages)
            assert session.model is None and not session.scored_with

    asyncio.run(go())

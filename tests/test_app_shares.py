"""The column screen shows bootstrap selection shares (Sauerbrei & Schumacher 1992) and an
accepted form records them, with the training deciles, in the log."""

from __future__ import annotations

import asyncio
from pathlib import Path

import pytest
from app_fleet import OUTCOME, quick_scanner, settle, write_fleet
from test_app_flows import highlight_form, open_column, text_of

from tui import recodings
from tui.app.app import ReviewApp
from tui.app.session import open_session
from tui.app.widgets.forms_table import FormsTable
from tui.engine.column_fits import CandidateSet, fit_column
from tui.engine.counts import reduce_column
from tui.engine.stability import DEFAULT_RESAMPLES, DEFAULT_SEED, selection_shares

LOG = "fleet.recodings.json"


@pytest.fixture
def folder(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    monkeypatch.chdir(tmp_path)
    write_fleet(tmp_path)
    return tmp_path


def test_shares_show_beside_the_table_and_go_into_the_evidence(folder: Path) -> None:
    session = open_session(folder / "fleet.csv", OUTCOME, log_path=LOG)
    # The engine's own shares for the same column, candidates and seed.
    counts = reduce_column(session.dataset.values("route_km"), session.dataset.outcome.y)
    wanted = CandidateSet(4, 4)
    table = fit_column(counts, wanted).table
    expected = selection_shares(counts, table, wanted.candidates(), DEFAULT_RESAMPLES, DEFAULT_SEED)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=(120, 40)) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "route_km")
            await settle(pilot)
            line = text_of(screen, "#shares")
            assert f"of {DEFAULT_RESAMPLES} resamples" in line and "not nested in linear" in line
            forms = screen.query_one(FormsTable)
            cells = [c.plain.strip() for c in forms.get_row("quadratic")]
            assert f"{round(100 * expected.share('quadratic'))}%" in cells
            await highlight_form(pilot, "quadratic")
            await pilot.press("a")
            await pilot.pause()

    asyncio.run(go())
    decision = recodings.load_log(folder / LOG).decision_for("route_km")
    assert decision.evidence.selection is not None
    assert decision.evidence.selection.seed == DEFAULT_SEED
    assert dict(decision.evidence.selection.shares) == pytest.approx(expected.shares)
    assert decision.deciles is not None and len(decision.deciles) == 9
    assert list(decision.deciles) == sorted(decision.deciles)


def test_b_turns_the_indicator_side_and_the_log_records_it(folder: Path) -> None:
    session = open_session(folder / "fleet.csv", OUTCOME, log_path=LOG)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=(120, 40)) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "route_km")
            await pilot.press("b")
            await settle(pilot)
            row = screen.fits.table.row("indicator")
            assert row.recoding.params["side"] == "above"
            assert "≥" in screen.query_one(FormsTable).get_row("indicator")[0].plain
            await highlight_form(pilot, "indicator")
            await pilot.press("a")
            await pilot.pause()

    asyncio.run(go())
    decision = recodings.load_log(folder / LOG).decision_for("route_km")
    assert decision.recoding.params["side"] == "above"
    assert decision.outputs == ("route_km__above",)

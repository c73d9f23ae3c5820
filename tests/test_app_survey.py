"""The review app under survey weights: every place a score shows names its statistic
(robust Wald, computed in the engine), and the candidate table's LR p is marked approximate."""

from __future__ import annotations

import asyncio
from pathlib import Path

import pytest
from app_fleet import OUTCOME, WEIGHT, quick_scanner, settle, write_weighted_fleet

from tui import recodings
from tui.app.app import ReviewApp
from tui.app.screens.inspect import InspectScreen
from tui.app.session import open_session
from tui.app.widgets.forms_table import FormsTable
from tui.app.widgets.line import Line
from tui.app.widgets.triage_table import TriageTable

LOG = "fleet.recodings.json"


def text_of(screen, selector: str) -> str:
    return str(screen.query_one(selector, Line).render())


@pytest.mark.parametrize("kind, statistic", [("survey", "Wald (robust)"), ("frequency", "LR")])
def test_scores_name_their_statistic_on_every_screen(tmp_path: Path, monkeypatch, kind, statistic):
    monkeypatch.chdir(tmp_path)
    write_weighted_fleet(tmp_path)
    session = open_session(tmp_path / "fleet_w.csv", OUTCOME, log_path=LOG, weight=WEIGHT,
                           weight_kind=kind)  # fmt: skip

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=(120, 40)) as pilot:
            await settle(pilot)
            assert f"scores {statistic}" in text_of(app.screen, "#summary")
            scan = next(s for s in session.ranked if s.score is not None)
            assert scan.statistic == statistic  # from the engine
            pilot.app.screen.query_one(TriageTable).move_to_key(scan.column)
            await pilot.press("enter")
            await settle(pilot)
            screen = pilot.app.screen
            assert isinstance(screen, InspectScreen)
            assert f"on {scan.df} df ({statistic})" in text_of(screen, "#evidence")
            approximate = "LR p and ΔAIC approximate" in text_of(screen, "#shares")
            assert approximate == (kind == "survey")
            screen.query_one(FormsTable).move_to_key("quadratic")
            await pilot.pause()
            await pilot.press("a", "enter", "escape", "L")
            await settle(pilot)
            assert f"({statistic})" in text_of(app.screen, "#detail")

    asyncio.run(go())
    decision = next(iter(recodings.load_log(tmp_path / LOG).decisions))
    assert decision.evidence["score_statistic"] == statistic
    assert decision.evidence["weight_kind"] == kind

"""The inspection screen's missing-value panel and the choice of a fill, driven with Pilot
on the invented fleet data (van_age_years has some missing values)."""

from __future__ import annotations

import asyncio
from pathlib import Path

import numpy as np
import pytest
from app_fleet import OUTCOME, quick_scanner, settle, write_fleet
from textual.widgets import Input

from tui import recodings
from tui.app.app import ReviewApp
from tui.app.screens.inspect import InspectScreen
from tui.app.screens.missing_choice import FillPrompt, MissingChoiceScreen, parse_fill
from tui.app.screens.recorded_view import RecordedView
from tui.app.session import open_session
from tui.app.widgets.missing_panel import MissingPanel, missing_lines
from tui.app.widgets.triage_table import TriageTable
from tui.engine.counts import reduce_column
from tui.engine.groups import logit_groups
from tui.engine.missing_group import MissingGroup, missing_group
from tui.report.cells import group_is_safe

SIZE = (100, 32)
LOG = "fleet.recodings.json"
COLUMN = "van_age_years"


@pytest.fixture
def folder(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    monkeypatch.chdir(tmp_path)
    write_fleet(tmp_path)
    return tmp_path


async def open_column(pilot, column: str) -> InspectScreen:
    table = pilot.app.screen.query_one(TriageTable)
    table.move_to_key(column)
    await pilot.press("enter")
    await settle(pilot)
    assert isinstance(pilot.app.screen, InspectScreen)
    return pilot.app.screen


def panel_text(screen) -> str:
    return str(screen.query_one(MissingPanel).render())


def test_panel_shows_the_missing_group_and_choosing_a_typed_fill_saves_it(folder: Path) -> None:
    session = open_session(folder / "fleet.csv", OUTCOME, log_path=LOG)
    x = session.dataset.raw_values(COLUMN)
    group = missing_group(x, session.dataset.outcome.y)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "route_km")  # nothing missing: no panel
            assert not screen.query_one(MissingPanel).display
            await pilot.press("right_square_bracket")
            screen.show_column(COLUMN)
            await settle(pilot)
            panel = screen.query_one(MissingPanel)
            assert panel.display
            text = panel_text(screen)
            assert "missing x" in text and f"rows {int(group.n)}" in text
            # 17 rows of which fewer than 10 are non-events: rate and logit are withheld.
            assert group_is_safe(group.n, group.events, 10) is False
            assert "withheld (<10)" in text and "logit 1." not in text

            await pilot.press("f")  # nothing accepted yet: the screen says so
            await pilot.pause()
            assert app.screen is screen
            await pilot.press("l")  # keep linear
            await pilot.pause()
            assert isinstance(app.screen, RecordedView)
            await pilot.press("enter")

            await pilot.press("f")
            await pilot.pause()
            chooser = app.screen
            assert isinstance(chooser, MissingChoiceScreen)
            figures = str(chooser.query_one("#figures").render())
            assert f"all {int(group.rows)} rows with an outcome" in figures
            assert f"complete-case table: {int(group.observed)} rows" in figures
            assert "Sterne" in str(chooser.query_one("#caution").render())
            assert chooser.comparison.fill == pytest.approx(float(np.nanmedian(x)))

            await pilot.press("t")
            await pilot.pause()
            assert isinstance(app.screen, FillPrompt)
            app.screen.query_one(Input).value = "7.25"
            await pilot.press("enter")
            await pilot.pause()
            assert app.screen is chooser and chooser.comparison.fill == 7.25
            assert "fill with 7.25" in str(chooser.query_one("#figures").render())
            await pilot.press("3")
            await pilot.pause()
            assert app.screen is screen

        saved = recodings.load(folder / LOG).decision_for(COLUMN)
        assert saved.recoding.missing.fill == 7.25 and saved.recoding.missing.indicator
        assert saved.outputs == (f"{COLUMN}__lin", f"{COLUMN}__missing")
        out = saved.recoding.apply(x)
        np.testing.assert_array_equal(out[:, 1], ~np.isfinite(x))
        np.testing.assert_array_equal(out[~np.isfinite(x), 0], 7.25)

    asyncio.run(go())


def test_leave_missing_removes_a_fill_again(folder: Path) -> None:
    session = open_session(folder / "fleet.csv", OUTCOME, log_path=LOG)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            await open_column(pilot, COLUMN)
            await pilot.press("l", "enter", "f")
            await pilot.pause()
            await pilot.press("2")  # fill with the training median
            await pilot.pause()
            assert recodings.load(folder / LOG).decision_for(COLUMN).recoding.missing
            await pilot.press("f")
            await pilot.pause()
            await pilot.press("1")
            await pilot.pause()
        decision = recodings.load(folder / LOG).decision_for(COLUMN)
        assert decision.recoding.missing is None and decision.outputs == (f"{COLUMN}__lin",)

    asyncio.run(go())


def test_panel_lines_give_rate_logit_and_whisker_beside_the_observed_groups() -> None:
    big = MissingGroup(
        n=200, events=80, observed=3000, observed_events=600, logit=-0.4, variance=0.02
    )
    groups = logit_groups(reduce_column(np.arange(40.0), np.arange(40) % 3 == 0), 4)
    lines = missing_lines(big, groups)
    assert lines[:5] == ["missing x", "rows 200", "rate 0.400", "◆ logit -0.40", "±1.96 SE 0.28"]
    low, high = min(g.logit for g in groups), max(g.logit for g in groups)
    assert lines[6] == f"{low:.2f} to {high:.2f}"


def test_small_missing_groups_follow_the_small_cell_rule() -> None:
    small = MissingGroup(n=6, events=2, observed=300, observed_events=90, logit=-0.6, variance=0.6)
    text = "\n".join(missing_lines(small, ()))
    assert "rows <10" in text and "withheld" in text and "-0.6" not in text


@pytest.mark.parametrize(("typed", "value"), [("7.25", 7.25), (" -3 ", -3.0), ("1e3", 1000.0)])
def test_parse_fill_accepts_any_finite_number(typed: str, value: float) -> None:
    assert parse_fill(typed) == value


@pytest.mark.parametrize("typed", ["", "nan", "inf", "seven"])
def test_parse_fill_refuses_what_is_not_a_finite_number(typed: str) -> None:
    with pytest.raises(ValueError):
        parse_fill(typed)

"""SVG snapshots of every screen of the review app at 80x24 and 120x40.

The data are invented and fixed (tests/app_fleet.py), the scan runs in this process, paths
are shown relative to the working folder and the one dated field is fixed, so the pictures
are the same on every run. Update them with ``pytest --snapshot-update`` after a deliberate
change, and look at the new pictures before committing them.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import pytest
from app_fleet import OUTCOME, WEIGHT, quick_scanner, settle, write_fleet, write_weighted_fleet
from textual.widgets import Input

from tui import recodings
from tui.app.app import ReviewApp
from tui.app.fit_cache import FitCache, FitRequest
from tui.app.session import open_session
from tui.app.widgets.forms_table import FormsTable
from tui.app.widgets.triage_table import TriageTable

SIZES = [(80, 24), (120, 40)]
LOG = "fleet.recodings.json"
DECIDED_AT = "2026-01-15T09:30:00+00:00"


@pytest.fixture
def folder(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    monkeypatch.chdir(tmp_path)
    write_fleet(tmp_path)
    return tmp_path


def fresh_app(folder: Path) -> ReviewApp:
    return ReviewApp(open_session(folder / "fleet.csv", OUTCOME, log_path=LOG), quick_scanner)


def decided_app(folder: Path) -> ReviewApp:
    """An app restarted on a log that holds two decisions made at a fixed time by a fixed
    analyst."""
    session = open_session(folder / "fleet.csv", OUTCOME, log_path=LOG, analyst="analyst-1")
    fits = FitCache(session.dataset, session.settings.max_levels).fits(FitRequest("route_km", 4, 4))
    session.accept("route_km", fits.table.row("quadratic"), 4, 4)
    session.set_note("route_km", "short and long routes both run late")
    session.set_aside("depot_code")
    log = session.log
    log = replace(
        log,
        decisions=tuple(replace(d, decided_at=DECIDED_AT) for d in log.decisions),
        set_aside=tuple(replace(s, decided_at=DECIDED_AT) for s in log.set_aside),
    )
    recodings.save_log(log, folder / LOG)
    return fresh_app(folder)


def adjusted_app(folder: Path) -> ReviewApp:
    """Weighted, adjusted for the stop count and the region, with the route length accepted
    (quadratic) and the list re-scored in the working model."""
    write_weighted_fleet(folder)
    session = open_session(
        folder / "fleet_w.csv",
        OUTCOME,
        log_path=LOG,
        adjust=["stops", "region"],
        weight=WEIGHT,
        analyst="analyst-1",
    )
    cache = FitCache(session.dataset, session.settings.max_levels, session.adjustment)
    fits = cache.fits(FitRequest("route_km", 4, 4, basis=session.base))
    session.accept("route_km", fits.table.row("quadratic"), 4, 4, basis=session.base)
    return ReviewApp(session, quick_scanner)


async def into_column(pilot, column: str, form: str) -> None:
    await settle(pilot)
    pilot.app.screen.query_one(TriageTable).move_to_key(column)
    await pilot.press("enter")
    await settle(pilot)
    pilot.app.screen.query_one(FormsTable).move_to_key(form)
    await pilot.pause()


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def test_column_list(snap_compare, folder: Path, size: tuple[int, int]) -> None:
    async def before(pilot) -> None:
        await settle(pilot)

    assert snap_compare(decided_app(folder), terminal_size=size, run_before=before)


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def test_column_inspection(snap_compare, folder: Path, size: tuple[int, int]) -> None:
    async def before(pilot) -> None:
        await into_column(pilot, "parcel_kg", "indicator")  # the caution line shows

    assert snap_compare(fresh_app(folder), terminal_size=size, run_before=before)


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def test_recoded_view(snap_compare, folder: Path, size: tuple[int, int]) -> None:
    async def before(pilot) -> None:
        await into_column(pilot, "parcel_kg", "quadratic")
        await pilot.press("v")  # groups against the form's linear predictor
        await pilot.pause()

    assert snap_compare(fresh_app(folder), terminal_size=size, run_before=before)


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def test_cut_point_prompt(snap_compare, folder: Path, size: tuple[int, int]) -> None:
    async def before(pilot) -> None:
        await into_column(pilot, "parcel_kg", "linear")
        await pilot.press("c", "x")
        pilot.app.screen.query_one(Input).cursor_blink = False
        await pilot.press("enter")  # "x" is not a number: the prompt says so and stays

    assert snap_compare(fresh_app(folder), terminal_size=size, run_before=before)


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def test_recorded_view(snap_compare, folder: Path, size: tuple[int, int]) -> None:
    async def before(pilot) -> None:
        await into_column(pilot, "route_km", "spline")
        await pilot.press("a")

    assert snap_compare(fresh_app(folder), terminal_size=size, run_before=before)


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def test_recoding_log(snap_compare, folder: Path, size: tuple[int, int]) -> None:
    async def before(pilot) -> None:
        await settle(pilot)
        await pilot.press("L")

    assert snap_compare(decided_app(folder), terminal_size=size, run_before=before)


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def test_help(snap_compare, folder: Path, size: tuple[int, int]) -> None:
    async def before(pilot) -> None:
        await settle(pilot)
        await pilot.press("question_mark")

    assert snap_compare(fresh_app(folder), terminal_size=size, run_before=before)


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def test_adjusted_column_list(snap_compare, folder: Path, size: tuple[int, int]) -> None:
    async def before(pilot) -> None:
        await settle(pilot)
        await pilot.press("m")
        await settle(pilot)
        pilot.app.screen.query_one(TriageTable).move_to_key("parcel_kg")
        pilot.app.clear_notifications()
        await pilot.pause()

    assert snap_compare(adjusted_app(folder), terminal_size=size, run_before=before)


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def test_adjusted_inspection(snap_compare, folder: Path, size: tuple[int, int]) -> None:
    async def before(pilot) -> None:
        await settle(pilot)
        await pilot.press("m")
        await into_column(pilot, "parcel_kg", "spline")
        pilot.app.clear_notifications()
        await pilot.pause()

    assert snap_compare(adjusted_app(folder), terminal_size=size, run_before=before)

"""Pilot tests of the review's safety keys: undo, groups and knots per column, a cursor that
stays on its column, and filter typing that never reaches the column screen."""

from __future__ import annotations

import asyncio
import json
import threading
from pathlib import Path

import pytest
from app_fleet import OUTCOME, quick_scanner, settle, write_fleet
from textual import events

from tui.app.app import ReviewApp
from tui.app.screens.decisions import DecisionsScreen
from tui.app.screens.inspect import InspectScreen
from tui.app.screens.recorded_view import RecordedView
from tui.app.screens.triage import TriageScreen
from tui.app.session import ReviewSession, open_session
from tui.app.widgets.forms_table import FormsTable
from tui.app.widgets.line import Line
from tui.app.widgets.triage_table import TriageTable
from tui.recodings.decisions import DecisionBook

SIZE = (80, 24)
LOG = "fleet.recodings.json"


@pytest.fixture
def folder(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    monkeypatch.chdir(tmp_path)
    write_fleet(tmp_path)
    return tmp_path


def session_in(folder: Path) -> ReviewSession:
    return open_session(folder / "fleet.csv", OUTCOME, log_path=LOG)


def on_disk(folder: Path) -> tuple[list[str], list[str]]:
    """Columns recorded and set aside in the saved log."""
    document = json.loads((folder / LOG).read_text())
    return [r["column"] for r in document["recodings"]], [
        s["column"] for s in document["set_aside"]
    ]


def text_of(screen, selector: str) -> str:
    return str(screen.query_one(selector, Line).render())


async def open_column(pilot, column: str) -> InspectScreen:
    table = pilot.app.screen.query_one(TriageTable)
    table.move_to_key(column)
    await pilot.press("enter")
    await settle(pilot)
    assert isinstance(pilot.app.screen, InspectScreen)
    return pilot.app.screen


def test_z_undoes_decisions_one_by_one_and_saves_each_time(folder: Path) -> None:
    session = session_in(folder)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "route_km")
            screen.query_one(FormsTable).move_to_key("quadratic")
            await pilot.press("a")
            await settle(pilot)
            assert isinstance(app.screen, RecordedView)
            title = text_of(app.screen, "#title")
            assert title == "recorded: route_km quadratic, z undoes"
            assert text_of(app.screen, "#heading").startswith("First 8 rows, recoded")
            assert app.screen.preview.columns[0].header == "row"
            await pilot.press("escape", "l")  # keep route_km linear instead
            await settle(pilot)
            await pilot.press("escape", "right_square_bracket")
            await settle(pilot)
            other = screen.column
            await pilot.press("x")
            await settle(pilot)
            assert on_disk(folder) == (["route_km"], [other])
            assert session.decision_word("route_km") == "kept linear"

            await pilot.press("z")  # back: other is undecided again, and saved so
            await settle(pilot)
            assert on_disk(folder) == (["route_km"], [])
            assert "undecided" in text_of(screen, "#heading")
            await pilot.press("escape")  # z works on the list too
            await settle(pilot)
            assert isinstance(app.screen, TriageScreen)
            await pilot.press("z")  # back to quadratic
            await settle(pilot)
            assert session.decision_word("route_km") == "quadratic"
            # At 80 columns the summary names only the counts that are not zero.
            assert text_of(app.screen, "#summary").startswith("1 of 7 decided: 1 recoded · scores")
            await pilot.press("L", "z")  # and on the log screen
            await settle(pilot)
            assert isinstance(app.screen, DecisionsScreen)
            assert on_disk(folder) == ([], [])
            assert "0 recoded · 0 kept linear · 0 set aside" in text_of(app.screen, "#file")
            await pilot.press("z")  # nothing left: nothing changes
            await settle(pilot)
            assert on_disk(folder) == ([], [])

    asyncio.run(go())


def test_z_on_the_recorded_view_takes_the_decision_back_and_closes_it(folder: Path) -> None:
    session = session_in(folder)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            await open_column(pilot, "stops")
            await pilot.press("l")
            await settle(pilot)
            assert isinstance(app.screen, RecordedView)
            await pilot.press("z")
            await settle(pilot)
            assert isinstance(app.screen, InspectScreen)
            assert session.log.decisions == () and on_disk(folder) == ([], [])

    asyncio.run(go())


def test_the_undo_stack_lives_in_the_decision_book(folder: Path) -> None:
    # UI-free: the book alone records, saves and walks back.
    session = session_in(folder)
    book: DecisionBook = session.book
    assert book.undo() is None
    session.set_aside("stops", "a count, not a measurement")
    session.set_aside("route_km")
    assert book.last_change() == "route_km set aside"
    assert book.undo() == "route_km set aside"
    assert on_disk(folder) == ([], ["stops"])
    assert book.undo() == "stops set aside"
    assert on_disk(folder) == ([], []) and book.undo() is None


def test_groups_and_knots_belong_to_each_column(folder: Path) -> None:
    session = session_in(folder)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "route_km")
            await pilot.press("g", "s")  # route_km: 5 groups, 5 knots
            await settle(pilot)
            assert (screen.groups, screen.knots) == (5, 5)
            await pilot.press("right_square_bracket")
            await settle(pilot)
            second = screen.column
            assert (screen.groups, screen.knots) == (4, 4)  # not carried onward
            assert "g 4 groups · s 4 knots" in text_of(screen, "#settings")
            await pilot.press("g", "g")
            await settle(pilot)
            assert screen.groups == 10
            await pilot.press("left_square_bracket")
            await settle(pilot)
            assert screen.column == "route_km" and (screen.groups, screen.knots) == (5, 5)
            assert "g 5 groups · s 5 knots" in text_of(screen, "#settings")
            assert screen.fits.request.groups == 5
            await pilot.press("l")
            await settle(pilot)
            await pilot.press("escape", "escape")  # out to the list, then open again
            await settle(pilot)
            screen = await open_column(pilot, second)
            assert screen.groups == 10  # remembered while the app runs
            await pilot.press("l")
            await settle(pilot)
            evidence = {d.column: d.evidence for d in session.log.decisions}
            assert (evidence["route_km"].groups, evidence["route_km"].knots) == (5, 5)
            assert (evidence[second].groups, evidence[second].knots) == (10, 4)

    asyncio.run(go())


def test_the_cursor_stays_on_its_column_while_the_scan_ends_and_the_list_resorts(
    folder: Path,
) -> None:
    session = session_in(folder)
    release = threading.Event()

    def held_scanner(columns, values_of, y, settings, *, adjust=None):
        for i, result in enumerate(quick_scanner(columns, values_of, y, settings)):
            if i == 3:
                release.wait(timeout=30)
            yield result

    async def go() -> None:
        app = ReviewApp(session, held_scanner)
        async with app.run_test(size=SIZE) as pilot:
            for _ in range(60):
                await pilot.pause(0.05)
                if len(session.ranked) == 3:
                    break
            await pilot.pause(0.3)
            table = app.screen.query_one(TriageTable)
            await pilot.press("down")
            chosen = table.highlighted_key()
            assert chosen is not None and table.cursor_row == 1
            release.set()
            await settle(pilot)
            await pilot.pause(0.3)
            assert table.row_count == 7
            assert table.highlighted_key() == chosen
            for _ in range(4):  # every order of the list, and back
                await pilot.press("s")
                await pilot.pause()
                assert table.highlighted_key() == chosen
            assert chosen in text_of(app.screen, "#detail")

    asyncio.run(go())


def test_the_sort_key_during_the_scan_keeps_the_cursor_too(folder: Path) -> None:
    session = session_in(folder)
    release = threading.Event()

    def held_scanner(columns, values_of, y, settings, *, adjust=None):
        for i, result in enumerate(quick_scanner(columns, values_of, y, settings)):
            if i == 3:
                release.wait(timeout=30)
            yield result

    async def go() -> None:
        app = ReviewApp(session, held_scanner)
        async with app.run_test(size=SIZE) as pilot:
            for _ in range(60):
                await pilot.pause(0.05)
                if len(session.ranked) == 3:
                    break
            await pilot.pause(0.3)
            table = app.screen.query_one(TriageTable)
            await pilot.press("s")  # by name: the cursor's column moves, the cursor with it
            chosen = table.highlighted_key()
            release.set()
            await settle(pilot)
            await pilot.pause(0.3)
            assert table.highlighted_key() == chosen

    asyncio.run(go())


def test_typing_for_the_filter_never_reaches_the_column_screen(folder: Path) -> None:
    session = session_in(folder)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            # All at once, as a fast typist or a paste delivers them: the Enter meant for
            # the filter, then letters that decide on the column screen (a, l, x).
            keys = ["slash", *"route", "enter", *"alxa"]
            for key in keys:
                char = {"slash": "/", "enter": "\r"}.get(key, key)
                app._driver.send_message(events.Key(key, char))
            await pilot.pause(0.5)
            await settle(pilot)
            assert session.log.decisions == () and session.log.set_aside == ()
            assert not (folder / LOG).exists()
            assert isinstance(app.screen, TriageScreen)  # the Enter was the filter's
            assert app.screen.query_one("#filter").value == "route"

    asyncio.run(go())


def test_keys_typed_before_a_column_is_shown_do_not_decide(folder: Path) -> None:
    session = session_in(folder)
    release = threading.Event()

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        fits = app.cache.fits

        def held(request):  # the column's fits take their time
            release.wait(timeout=30)
            return fits(request)

        app.cache.fits = held
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            table = app.screen.query_one(TriageTable)
            table.move_to_key("stops")
            await pilot.press("enter")
            await pilot.pause()
            assert isinstance(app.screen, InspectScreen) and app.screen.fits is None
            # Nothing is shown yet: "a" and "l" need a fitted row, "x" waits for the fits.
            await pilot.press("x", "a", "l")
            release.set()
            await settle(pilot)
            assert app.screen.fits is not None
            assert session.log.decisions == () and session.log.set_aside == ()
            await pilot.press("x")  # once shown, the key does decide
            assert session.log.set_aside[0].column == "stops"

    asyncio.run(go())


@pytest.mark.parametrize("width", [80, 160])
def test_the_summary_line_keeps_the_sort_and_filter_in_view(folder: Path, width: int) -> None:
    # The counts in full at 80 columns pushed the sort order and the filter off the line.
    session = session_in(folder)
    seen: list[str] = []

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=(width, 24)) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "route_km")
            screen.query_one(FormsTable).move_to_key("quadratic")
            await pilot.press("a")
            await settle(pilot)
            await pilot.press("escape", "escape", "s", "slash", "r", "o", "enter")
            await settle(pilot)
            line = app.screen.query_one("#summary", Line)
            seen.append(str(line.render()))
            seen.append(str(line.content_size.width))

    asyncio.run(go())
    text, room = seen[0], int(seen[1])
    # The sort and the filter are on screen (later hints may still be cut with "…").
    shown = text.index("names containing 'ro'") + len("names containing 'ro'")
    assert shown <= room, text
    assert "sorted by name" in text
    if width == 80:
        assert text.startswith("1 of 7 decided: 1 recoded · scores")
    else:
        assert text.startswith("1 of 7 decided: 1 recoded · 0 kept linear · 0 set aside · scores")

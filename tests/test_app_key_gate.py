"""Keys first while the review app scans: the scan thread stands aside while a key is
being answered (never for good), and the list's timed redraw waits for a pause in typing."""

from __future__ import annotations

import asyncio
import time
from pathlib import Path

import pytest
from app_fleet import NUMERIC, OUTCOME, quick_scanner, settle, write_fleet

from tui.app import key_gate
from tui.app.app import ReviewApp
from tui.app.key_gate import KeyGate
from tui.app.screens import triage
from tui.app.screens.triage import TriageScreen
from tui.app.session import open_session
from tui.app.widgets.triage_table import TriageTable

SIZE = (120, 30)


class Clock:
    """A clock the test moves by hand; each reading can also step it on."""

    def __init__(self, step: float = 0.0) -> None:
        self.now, self.step = 100.0, step

    def __call__(self) -> float:
        self.now += self.step
        return self.now


def test_a_key_is_outstanding_until_answered() -> None:
    clock = Clock()
    gate = KeyGate(clock)
    assert not gate.outstanding() and not gate.typing()
    gate.pressed()
    assert gate.outstanding() and gate.typing()
    clock.now += 0.01
    gate.answered()
    assert not gate.outstanding()
    assert gate.typing()  # a key this recent: typing goes on
    clock.now += key_gate.QUIET_AFTER
    assert not gate.typing()


def test_the_scan_stands_aside_at_most_the_longest_wait() -> None:
    clock = Clock(step=0.05)  # every reading is 50 ms on: no real half-second wait
    gate = KeyGate(clock)
    gate.pressed()
    gate.stand_aside()
    assert gate.outstanding()  # never answered, and yet the scan goes on
    assert key_gate.LONGEST_WAIT - 0.1 <= gate.waited <= key_gate.LONGEST_WAIT + 0.1


def test_a_cancelled_scan_does_not_wait_for_a_key() -> None:
    gate = KeyGate(Clock())  # frozen: the key would hold the scan for ever
    gate.pressed()
    started = time.perf_counter()
    gate.stand_aside(cancelled=lambda: True)
    assert time.perf_counter() - started < 0.1


@pytest.fixture
def app(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> ReviewApp:
    monkeypatch.chdir(tmp_path)
    write_fleet(tmp_path)
    session = open_session(tmp_path / "fleet.csv", OUTCOME, log_path="fleet.recodings.json")
    return ReviewApp(session, quick_scanner)


async def until(pilot, ready, seconds: float = 20.0) -> None:
    for _ in range(int(seconds / 0.02)):
        if ready():
            return
        await pilot.pause(0.02)
    raise AssertionError("timed out")


def test_the_scan_waits_while_a_key_is_unanswered(app: ReviewApp) -> None:
    clock = Clock()  # frozen: the key's longest wait never runs out
    app.keys = KeyGate(clock)
    app.keys.pressed()  # a key that is never answered

    async def go() -> None:
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause(0.5)  # ample time to scan seven columns in this process
            assert app.session.ranked == []
            assert app.scanning()
            app.keys.answered()
            await until(pilot, lambda: not app.scanning())
            assert len(app.session.ranked) == len(NUMERIC)
            await settle(pilot)

    asyncio.run(go())


def test_a_pressed_key_is_answered_after_the_screen_refreshes(app: ReviewApp) -> None:
    async def go() -> None:
        async with app.run_test(size=SIZE) as pilot:
            await until(pilot, lambda: not app.scanning())
            await pilot.press("down")
            await until(pilot, lambda: not app.keys.outstanding(), 5.0)
            assert app.screen.query_one(TriageTable).cursor_row == 1
            assert not app.keys.outstanding()
            await settle(pilot)

    asyncio.run(go())


def test_the_timed_redraw_waits_for_a_pause_in_typing(app: ReviewApp) -> None:
    async def go() -> None:
        async with app.run_test(size=SIZE) as pilot:
            await until(pilot, lambda: not app.scanning())
            screen = app.screen
            assert isinstance(screen, TriageScreen)
            drawn: list[float] = []
            screen.redraw = lambda: drawn.append(time.monotonic())  # type: ignore[method-assign]
            app.keys.pressed()  # typing
            screen._redraw_due = time.monotonic()
            screen._timed_redraw()
            assert drawn == [] and screen._redraw_timer is not None  # tried again soon
            screen._redraw_timer.stop()
            # Waited long enough: the list is redrawn however the keys come.
            screen._redraw_due = time.monotonic() - triage.HOLD_SECONDS
            screen._timed_redraw()
            assert len(drawn) == 1 and screen._redraw_timer is None
            app.keys = KeyGate()  # no key: the redraw runs on time
            screen._redraw_due = time.monotonic()
            screen._timed_redraw()
            assert len(drawn) == 2
            await settle(pilot)

    asyncio.run(go())

"""The review app on wide data: how soon is the list there, and do keys answer while scanning?

    python benchmarks/app_wide.py                      # 20,000 rows x 2,000 columns (~2 min)
    python benchmarks/app_wide.py --rows 2000 --cols 100 --results /tmp/trial.md

Writes the invented extract (benchmarks/synthetic.py: fixed seed; continuous, skewed,
whole-number and 5%-missing columns, a few planted shapes; beyond 500 columns the planted
effects centred and scaled down as in wide_speed.py) as Parquet, then drives the app headless
with Textual's Pilot, as ``bendwise review`` runs it (first pass in the scan thread,
second on worker processes), and prints:

1. time to open the data (``open_session``), to the first rows listed, to the end of the
   first pass (every score and q-value in: the list is final in order), and to the end of
   the second pass (every best form and ΔAIC in);
2. key-to-screen times while the scan runs and after it: from the key press until the
   screen shows its effect and the app is idle again (cursor down; the sort key redrawing
   the list; Enter until the column screen shows its candidate table; Escape back); median
   and largest of each;
3. for a column opened during the second pass, how long until its best form is in the
   list (it jumps the queue) against the time the second pass still had to run.

Also the load average at the start and end: the machine may be shared.
Writes its printout to benchmarks/results/app_wide.md (``--results`` to write elsewhere).
"""

from __future__ import annotations

import argparse
import asyncio
import os
import statistics
import sys
import tempfile
import time
from collections.abc import Callable
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
if str(REPO) not in sys.path:  # run as a script from anywhere
    sys.path.insert(0, str(REPO))

from textual import events  # noqa: E402

from benchmarks.results import recorded, results_path  # noqa: E402
from benchmarks.synthetic import OUTCOME, make_extract  # noqa: E402
from tui.app.app import ReviewApp  # noqa: E402
from tui.app.screens.inspect import InspectScreen  # noqa: E402
from tui.app.screens.triage import TriageScreen  # noqa: E402
from tui.app.session import open_session  # noqa: E402
from tui.app.widgets.forms_table import FormsTable  # noqa: E402
from tui.app.widgets.triage_table import TriageTable  # noqa: E402

WIDEST_PLAIN = 500
SIZE = (120, 40)
POLL = 0.01
POLL_KEY = 0.002


def _parse() -> argparse.Namespace:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--rows", type=int, default=20_000)
    parser.add_argument("--cols", type=int, default=2_000)
    parser.add_argument("--workdir", help="folder for the Parquet file (default: a temp one)")
    parser.add_argument("--results", type=Path, default=results_path("app_wide"))
    return parser.parse_args()


def _load() -> str:
    return ", ".join(f"{v:.2f}" for v in os.getloadavg())


async def _until(pilot, ready: Callable[[], bool], seconds: float = 600.0) -> None:  # noqa: ANN001
    end = time.perf_counter() + seconds
    while not ready():
        if time.perf_counter() > end:
            raise TimeoutError("the app did not get there in time")
        await pilot.pause(POLL)


class Keys:
    """Key-to-screen times, by phase and key: from sending the key until its effect is
    seen and a frame drawn after it (``drawn``). Pilot's own ``press`` waits until the
    process is idle, which it never is while the scan thread runs (the wait then ends at
    its one-second limit), so the key is sent as the terminal driver sends it and the
    frames are counted where the app hands them to the driver."""

    def __init__(self) -> None:
        self.times: dict[tuple[str, str], list[float]] = {}
        self.frame = 0.0  # when the app last handed a frame to the driver

    def watch(self, app) -> None:  # noqa: ANN001
        display = app._display  # noqa: SLF001 (the one place every frame passes)

        def counted(screen, renderable) -> None:  # noqa: ANN001
            if renderable is not None:
                self.frame = time.perf_counter()
            display(screen, renderable)

        app._display = counted  # noqa: SLF001

    async def press(self, pilot, phase: str, key: str, shown: Callable[[], bool]) -> None:  # noqa: ANN001
        start = time.perf_counter()
        char = key if len(key) == 1 else None
        pilot.app._driver.send_message(events.Key(key, char))  # noqa: SLF001
        end = start + 120.0
        # The effect came after the last look that did not see it: the frame showing it
        # is the first one after that look. (Taking the first look that sees it instead
        # misses a frame drawn within the same poll, and an idle app draws no other.)
        unseen = start
        while not shown():
            if time.perf_counter() > end:
                raise TimeoutError(f"{key} was not answered in time")
            unseen = time.perf_counter()
            await asyncio.sleep(POLL_KEY)
        while self.frame < unseen:  # the frame that shows it
            if time.perf_counter() > end:
                raise TimeoutError(f"{key}: no frame drawn after it")
            await asyncio.sleep(POLL_KEY)
        self.times.setdefault((phase, key), []).append(self.frame - start)

    def print(self) -> None:
        print("2. key-to-screen (key sent until shown and drawn), seconds:")
        print(f"   {'phase':<22} {'key':<8} {'presses':>7} {'median':>8} {'largest':>8}")
        for (phase, key), got in self.times.items():
            print(
                f"   {phase:<22} {key:<8} {len(got):>7} "
                f"{statistics.median(got):>8.3f} {max(got):>8.3f}"
            )


async def _keys_round(pilot, keys: Keys, phase: str, downs: int = 8) -> str | None:  # noqa: ANN001
    """Cursor down, the sort key four times (back to evidence), open a column and back;
    returns the column opened."""
    app = pilot.app
    table = app.screen.query_one(TriageTable)
    await pilot.press("home")
    await _until(pilot, lambda: table.cursor_row == 0)
    for _ in range(downs):
        row = table.cursor_row
        await keys.press(pilot, phase, "down", lambda r=row: table.cursor_row == r + 1)
        await pilot.pause(0.05)
    screen = app.screen
    for _ in range(4):
        before = screen.sort
        await keys.press(pilot, phase, "s", lambda b=before: screen.sort != b)
    column = table.highlighted_key()

    def forms_shown() -> bool:
        screen = app.screen
        if not isinstance(screen, InspectScreen):
            return False
        forms = screen.query(FormsTable)  # empty while the screen is still being composed
        return bool(forms) and forms.first().row_count > 0

    await keys.press(pilot, phase, "enter", forms_shown)
    await keys.press(pilot, phase, "escape", lambda: isinstance(app.screen, TriageScreen))
    return column


async def _drive(path: Path) -> None:
    start = time.perf_counter()
    # The log (and its lock) beside the data in the temp folder, released at the end.
    session = open_session(path, OUTCOME, log_path=path.with_suffix(".recodings.json"))
    opened = time.perf_counter() - start
    app = ReviewApp(session)
    keys = Keys()
    marks: dict[str, float] = {}
    try:
        async with app.run_test(size=SIZE) as pilot:
            table = app.screen.query_one(TriageTable)
            await _until(pilot, lambda: table.row_count > 0)
            marks["first rows"] = time.perf_counter() - start
            rows_then = table.row_count
            keys.watch(app)
            while not session.scan_finished:
                row, key = table.cursor_row, table.highlighted_key()
                step = "up" if row == table.row_count - 1 else "down"
                await keys.press(
                    pilot,
                    "first pass",
                    step,
                    lambda r=row, k=key: (table.cursor_row, table.highlighted_key()) != (r, k),
                )
                await pilot.pause(0.2)
            marks["first pass"] = time.perf_counter() - start
            gate = getattr(app, "keys", None)  # keys first (absent in older checkouts)
            aside = None if gate is None else gate.waited
            forms_then = sum(1 for s in session.ranked if s.forms_fitted)
            # Open a column the second pass has not reached: the lowest-ranked scored one.
            waiting = [s.column for s in session.ranked if s.score is not None]
            target = waiting[-1] if waiting else None
            jumped = None
            if target is not None and not session.scan_of(target).forms_fitted:
                table.move_to_key(target)
                opened_at = time.perf_counter()
                await pilot.press("enter")
                await _until(pilot, lambda: session.scan_of(target).forms_fitted, 300.0)
                jumped = time.perf_counter() - opened_at
                await pilot.press("escape")
            during = app.scanning()
            if during:
                await _keys_round(pilot, keys, "second pass")
            await _until(pilot, lambda: not app.scanning(), 900.0)
            marks["second pass"] = time.perf_counter() - start
            await _keys_round(pilot, keys, "after the scan")
    finally:
        session.book.close()  # releases the lock on the log
    print(f"1. open the data {opened:.2f} s; from the start of `review` to:")
    print(f"   first rows listed {marks['first rows']:.2f} s ({rows_then} rows then)")
    print(f"   end of first pass {marks['first pass']:.2f} s ({forms_then} best forms in then)")
    if aside is not None:
        print(f"   (in the first pass the scan thread stood aside {aside:.2f} s for keys)")
    print(f"   end of second pass {marks['second pass']:.2f} s")
    keys.print()
    if not during:
        print("   (the second pass ended before its keys were pressed)")
    if jumped is None:
        print("3. opened column: its forms were in before it could be opened")
    else:
        left = marks["second pass"] - (opened_at - start)
        print(
            f"3. the lowest-ranked column ({target}), opened as the first pass ended: "
            f"best form in the list after {jumped:.2f} s; the second pass ran {left:.1f} s more"
        )


def main() -> None:
    args = _parse()
    with recorded("app_wide", args.results):
        print(f"review app on wide data; {os.cpu_count()} cores; {args.rows} x {args.cols}")
        print(f"load average at start (1, 5, 15 min): {_load()}")
        strength = None if args.cols <= WIDEST_PLAIN else (WIDEST_PLAIN / args.cols) ** 0.5
        frame, _ = make_extract(args.rows, args.cols, strength=strength)
        if args.workdir:  # a folder that is not there yet is made, not a traceback
            Path(args.workdir).mkdir(parents=True, exist_ok=True)
        with tempfile.TemporaryDirectory(dir=args.workdir) as folder:
            path = Path(folder) / f"wide_{args.rows}x{args.cols}.parquet"
            frame.to_parquet(path)
            del frame
            asyncio.run(_drive(path))
        print(f"load average at end: {_load()}")


if __name__ == "__main__":
    main()

"""Is the review app responsive on a wide file? 20,000 rows x 2,000 columns by default.

    python benchmarks/wide_app.py                       # the 20,000 x 2,000 file
    python benchmarks/wide_app.py --workdir /tmp/wide   # keep the file and the scan there
    python benchmarks/wide_app.py --fill scan           # fill the list with the app's own scan

Drives the app with Textual's Pilot once the list is filled (the scan itself is measured
by app_wide.py and wide_speed.py) and times each key from the press until the screen has
handled it and redrawn: moving down and by pages, the ends of the list, each sort order,
typing a filter and clearing it, opening a column and going back. The same keys on a
10-column file give the cost of the Pilot itself per key, so the difference is what the
width costs. Target: under 100 ms per key on the wide file. Timing belongs here, never in
the test suite. The printout is also written to benchmarks/results/wide_app.md
(``--results`` elsewhere).

The file is the invented extract of app_wide.py (benchmarks/synthetic.py, Parquet). By
default the list is filled from scan results: a real two-pass scan of the file (engine
worker processes, outside the app) run once and kept in the workdir beside the file, keyed
by the shape and by the engine's source, so a later run with the same ``--workdir`` and
engine replays it in a second. ``--fill scan`` lets the app scan the file itself, as
``bendwise review`` does (minutes at 2,000 columns).
"""

from __future__ import annotations

import argparse
import asyncio
import hashlib
import os
import pickle
import statistics
import sys
import tempfile
import time
from collections.abc import Awaitable, Callable, Iterator
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
if str(REPO) not in sys.path:  # run as a script from anywhere
    sys.path.insert(0, str(REPO))

from benchmarks.results import recorded, results_path  # noqa: E402
from benchmarks.synthetic import OUTCOME, make_extract  # noqa: E402
from tui.app.app import ReviewApp  # noqa: E402
from tui.app.screens.inspect import InspectScreen  # noqa: E402
from tui.app.session import open_session  # noqa: E402
from tui.app.widgets.triage_table import TriageTable  # noqa: E402
from tui.engine.scan import ColumnScan, ScanSettings  # noqa: E402
from tui.engine.two_pass import TwoPassScan  # noqa: E402

SIZE = (120, 40)
TARGET_MS = 100.0
WIDEST_PLAIN = 500  # beyond this many columns the planted effects are scaled down
ENGINE = REPO / "tui" / "engine"


def _load() -> str:
    return ", ".join(f"{v:.2f}" for v in os.getloadavg())


def extract_file(folder: Path, rows: int, cols: int) -> Path:
    """The invented extract as Parquet in ``folder`` (written once)."""
    path = folder / f"wide_{rows}x{cols}.parquet"
    if not path.exists():
        strength = None if cols <= WIDEST_PLAIN else (WIDEST_PLAIN / cols) ** 0.5
        frame, _ = make_extract(rows, cols, strength=strength)
        frame.to_parquet(path.with_suffix(".part"))
        path.with_suffix(".part").replace(path)
    return path


def _engine_digest() -> str:
    """Cached results are only valid for the engine that computed them."""
    digest = hashlib.sha256()
    for source in sorted(ENGINE.rglob("*.py")):
        digest.update(source.read_bytes())
    return digest.hexdigest()[:16]


def cached_scan(path: Path) -> tuple[list[ColumnScan], str]:
    """Every column's full result for the file: from the cache beside it, else a real
    two-pass scan (kept there for the next run). Also says where the results came from."""
    cache = path.with_name(f"{path.stem}.scan-{_engine_digest()}.pickle")
    if cache.exists():
        with cache.open("rb") as handle:
            return pickle.load(handle), f"replayed from {cache.name} (a real two-pass scan)"
    session = open_session(path, OUTCOME, log_path=path.with_suffix(".fill.json"))
    data = session.dataset
    started = time.perf_counter()
    steps = TwoPassScan(session.columns, data.raw_values, data.outcome.y, ScanSettings())
    results = [step.scan for step in steps if step.stage == "forms"]
    seconds = time.perf_counter() - started
    session.book.close()
    with cache.with_suffix(".part").open("wb") as handle:
        pickle.dump(results, handle)
    cache.with_suffix(".part").replace(cache)
    how = (
        f"replayed from a real two-pass scan run now ({seconds:.1f} s on engine worker "
        f"processes, load average then {_load()}), kept as {cache.name}"
    )
    return results, how


def replayer(results: list[ColumnScan]) -> Callable[..., Iterator[ColumnScan]]:
    """A scanner for the app that hands back the cached results (one pass)."""

    def scanner(columns, values_of, y, settings, *, adjust=None) -> Iterator[ColumnScan]:  # noqa: ANN001
        wanted = set(columns)
        return iter([r for r in results if r.column in wanted])

    return scanner


Step = Callable[[object], Awaitable["Ended | None"]]
Ended = tuple[float, float, float, float | None]
"""When a step's timed part ended, if before its last key: (last frame, wall, CPU, the
first frame of the column screen when the step opens one)."""


def _press(*keys: str) -> Step:
    async def step(pilot) -> None:
        await pilot.press(*keys)

    return step


def _open_and_back(pilot_keys: tuple[str, ...] = ("enter",)) -> Step:
    async def step(pilot) -> None:
        await pilot.press(*pilot_keys)
        await pilot.app.workers.wait_for_complete()  # the column's fits
        await pilot.pause()
        await pilot.press("escape")

    return step


QUIET = 0.05


def _open_shown() -> Step:
    """Open the next column (not opened before, so nothing is cached) and time it until
    its plot and candidate forms are on the screen, and until the first frame of the
    column screen (its title and the fitting state); then, untimed, wait for the
    selection shares (a bootstrap in a worker thread, seconds) and go back."""

    async def step(pilot) -> Ended:
        # Not the Pilot's press: it waits for the process to be idle, so for the shares.
        screens = pilot.app.bench_screens
        screens.clear()
        pilot.app.simulate_key("enter")
        while getattr(pilot.app.screen, "fits", None) is None:
            await asyncio.sleep(0.002)
        # The forms are drawn once no frame has come for QUIET seconds.
        seen, frames = time.perf_counter(), pilot.app.bench_frames
        while time.perf_counter() - max([seen, *frames]) < QUIET:
            await asyncio.sleep(0.002)
        drawn = max([seen, *frames])
        first = next((t for t, shown in screens if isinstance(shown, InspectScreen)), None)
        ended = (drawn, drawn, time.process_time(), first)  # CPU: the worker's included
        await pilot.app.workers.wait_for_complete()
        await pilot.pause()
        await pilot.press("escape")
        return ended

    return step


# (what, step, repeats): each repeat is timed on its own, after _setup's keys (untimed).
FILTER_TYPED = "p1"
SCREEN_SHOWN = "open a new column: column screen shown"
"""A row of its own, from the presses of 'forms shown': the key to the first frame of the
column screen, what the user sees first (no Pilot figure; CPU up to that frame)."""
STEPS: list[tuple[str, Step | None, int]] = [
    ("down (one row)", _press("down"), 30),
    ("page down", _press("pagedown"), 10),
    ("end / home", _press("end"), 5),
    ("home", _press("home"), 5),
    ("sort: next order (s)", _press("s"), 8),
    ("filter: one more letter", _press("0"), 4),
    ("filter: clear (escape)", _press("escape"), 4),
    ("open a column and back", _open_and_back(), 3),
    ("open a new column: forms shown", _open_shown(), 3),
    (SCREEN_SHOWN, None, 0),  # the same presses, to the column screen's first frame
    ("back to the list (escape)", _press("escape"), 3),
]
"""Typed before the timed letter: about half of 2,000 names hold it, a tenth of those "p10"."""


def _setup(what: str, repeat: int) -> tuple[str, ...]:
    """Untimed keys before a timed one: the filter typed before its next letter (then the
    letter taken back), a filter to clear (the letter's is there for the first)."""
    if what.startswith("filter: one"):
        return ("slash", *FILTER_TYPED) if repeat == 0 else ("backspace",)
    if what.startswith("filter: clear") and repeat > 0:
        return ("slash", *FILTER_TYPED, "0")
    if what.startswith("open a new"):
        return ("down",)  # a column not opened yet
    if what.startswith("back"):
        return ("down", "enter")  # its fits and shares are waited for in _drive
    return ()


async def _drive(path: Path, fill: str) -> tuple[float, dict[str, list[float]], str]:
    """Fill the list (``fill``: "cache" or "scan"), then time every step."""
    how = "the app's own scan, as `bendwise review` runs it"
    scanner = None
    if fill == "cache":
        results, how = cached_scan(path)
        scanner = replayer(results)
    log = path.with_suffix(f".{os.getpid()}.json")  # a fresh log each run
    session = open_session(path, OUTCOME, log_path=log)
    app = ReviewApp(session) if scanner is None else ReviewApp(session, scanner)
    cols = len(session.columns)
    times: dict[str, list[float]] = {}
    frames: dict[str, list[float]] = {}
    cpu: dict[str, list[float]] = {}
    try:
        async with app.run_test(size=SIZE) as pilot:
            drawn = _frame_clock(app)
            start = time.perf_counter()
            while not (session.scan_finished and not app.scanning()):
                await asyncio.sleep(0.05)
            await pilot.app.workers.wait_for_complete()
            await pilot.pause()
            filled = time.perf_counter() - start
            assert app.screen.query_one(TriageTable).row_count == cols
            for what, step, repeats in STEPS:
                for i in range(repeats if step is not None else 0):
                    setup = _setup(what, i)
                    if setup:
                        await pilot.press(*setup)
                        await pilot.app.workers.wait_for_complete()
                        await pilot.pause()
                    drawn.clear()
                    began, busy = time.perf_counter(), time.process_time()
                    ended = await step(pilot)
                    await pilot.pause()
                    last = max(drawn, default=time.perf_counter())  # no frame: all of it
                    if ended is None:
                        ended = (last, time.perf_counter(), time.process_time(), None)
                    if ended[3] is not None:
                        frames.setdefault(SCREEN_SHOWN, []).append((ended[3] - began) * 1000)
                        cpu_then = next(c for t, c in drawn_cpu(app) if t == ended[3])
                        cpu.setdefault(SCREEN_SHOWN, []).append((cpu_then - busy) * 1000)
                    frames.setdefault(what, []).append((ended[0] - began) * 1000)
                    times.setdefault(what, []).append((ended[1] - began) * 1000)
                    cpu.setdefault(what, []).append((ended[2] - busy) * 1000)
    finally:
        session.book.close()
        log.unlink(missing_ok=True)
    return filled, {"pilot": times, "frame": frames, "cpu": cpu}, how


def _frame_clock(app: ReviewApp) -> list[float]:
    """When each frame was finished (the app composes a frame and hands it to the
    terminal; headless, nothing is written): the key's last frame is its redraw."""
    drawn: list[float] = []
    screens: list[tuple[float, object]] = []  # (when, the screen drawn), cleared by steps
    cpu: list[tuple[float, float]] = []  # (when, the process's CPU time then)
    display = app._display

    def timed(screen, renderable) -> None:  # noqa: ANN001
        display(screen, renderable)
        if renderable is not None:
            now = time.perf_counter()
            drawn.append(now)
            screens.append((now, screen))
            cpu.append((now, time.process_time()))

    app._display = timed  # type: ignore[method-assign]
    app.bench_frames = drawn  # type: ignore[attr-defined]  (for steps that end early)
    app.bench_screens = screens  # type: ignore[attr-defined]
    app.bench_cpu = cpu  # type: ignore[attr-defined]
    return drawn


def drawn_cpu(app: ReviewApp) -> list[tuple[float, float]]:
    """(when, CPU time) of every frame drawn so far."""
    return app.bench_cpu  # type: ignore[attr-defined]


def _line(what: str, wide: dict[str, list[float]], narrow: dict[str, list[float]]) -> str:
    frame = wide["frame"][what]
    verdict = "ok" if max(frame) < TARGET_MS else "SLOW"

    def median(figures: dict[str, list[float]]) -> float | None:
        return statistics.median(figures[what]) if what in figures else None

    figures = [
        statistics.median(frame),
        max(frame),
        median(narrow["frame"]),
        median(wide["pilot"]),
        median(narrow["pilot"]),
        median(wide["cpu"]),
        median(narrow["cpu"]),
    ]
    cells = " | ".join("-" if v is None else f"{v:.0f}" for v in figures)
    return f"| {what} | {len(frame)} | {cells} | {verdict} |"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--cols", type=int, default=2000)
    parser.add_argument("--rows", type=int, default=20_000)
    parser.add_argument(
        "--fill",
        choices=("cache", "scan"),
        default="cache",
        help="fill the list from a scan kept in the workdir (default) or by the app's own scan",
    )
    parser.add_argument(
        "--workdir", type=Path, help="keep the file and the scan here (default: a temp folder)"
    )
    parser.add_argument("--results", type=Path, default=results_path("wide_app"))
    args = parser.parse_args()
    with recorded("wide_app", args.results), tempfile.TemporaryDirectory() as tmp:
        folder = args.workdir or Path(tmp)
        folder.mkdir(parents=True, exist_ok=True)
        print(f"# Review app on a wide file: {args.cols} columns x {args.rows} rows\n")
        print(f"Load average at start (1, 5, 15 min): {_load()}.\n")
        wide_path = extract_file(folder, args.rows, args.cols)
        filled, wide, how = asyncio.run(_drive(wide_path, args.fill))
        wide_load = _load()
        narrow_path = extract_file(folder, args.rows, 10)
        _, narrow, _ = asyncio.run(_drive(narrow_path, args.fill))
        print(f"List filled in {filled:.1f} s: {how}.\n")
        print(
            "Milliseconds from the key press until the app has drawn its last frame for "
            "the key (the redraw), and until the Pilot's press and pause return (the "
            f"Pilot waits for the app to be idle, in steps of 20 ms); terminal "
            f"{SIZE[0]}x{SIZE[1]}. The 10-column run gives the cost of the Pilot and of "
            f"the app's fixed work per key. Target: every redraw under {TARGET_MS:.0f} ms "
            f"on the wide file (the verdict uses the largest). Load average after the "
            f"wide keys: {wide_load}; after the 10-column ones: {_load()}. CPU: the "
            "process's CPU time over the same span (the app, its threads and the Pilot; "
            "less sensitive to a shared machine than the wall-clock figures).\n"
        )
        print(
            "| key | presses | redraw median | redraw max | 10 cols redraw | "
            "Pilot median | 10 cols Pilot | CPU median | 10 cols CPU | verdict |"
        )
        print("|---|---|---|---|---|---|---|---|---|---|")
        for what, _step, _n in STEPS:
            print(_line(what, wide, narrow))
        print(
            "\n'open a column and back' includes fitting the column's candidate forms "
            "and their bootstrap selection shares (engine work in a worker thread, not "
            "drawing), the first time for the column (the largest figure), then from the "
            "cache. 'open a new column: forms shown' opens a column not opened before and "
            "stops the clock once its plot and forms table are drawn (the shares follow); "
            "'column screen shown' is the same presses to the first frame of the column "
            "screen, its title and 'fitting' state (no fit is ever made before the key: "
            "both are cold figures); "
            "'back to the list' is the escape from such a column. The other keys only "
            "redraw. Filter: "
            f"'/{FILTER_TYPED}' typed first, then the timed letter '0' (taken back between "
            f"presses, untimed); each clear empties the filter '{FILTER_TYPED}0'."
        )


if __name__ == "__main__":
    main()

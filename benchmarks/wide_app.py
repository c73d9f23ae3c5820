"""Is the review app responsive on a wide file? 2,000 numeric columns by default.

    python benchmarks/wide_app.py --cols 2000 --rows 500

Drives the app with Textual's Pilot once the list is filled (the scan itself is measured
by scan_speed.py) and times each key from the press until the screen has handled it and
redrawn: moving down and by pages, the ends of the list, each sort order, typing a filter
and clearing it, opening a column and going back. The same keys on a 10-column file give
the cost of the Pilot itself per key, so the difference is what the width costs. Target:
under 100 ms per key on the wide file. Timing belongs here, never in the test suite. The
printout is also written to benchmarks/results/wide_app.md (``--results`` elsewhere).
"""

from __future__ import annotations

import argparse
import asyncio
import statistics
import sys
import tempfile
import time
from collections.abc import Awaitable, Callable
from pathlib import Path

import numpy as np
import pandas as pd

REPO = Path(__file__).resolve().parent.parent
if str(REPO) not in sys.path:  # run as a script from anywhere
    sys.path.insert(0, str(REPO))

from benchmarks.results import recorded, results_path  # noqa: E402
from tui.app.app import ReviewApp  # noqa: E402
from tui.app.session import open_session  # noqa: E402
from tui.app.widgets.triage_table import TriageTable  # noqa: E402
from tui.engine.runner import scan_columns  # noqa: E402

OUTCOME = "defaulted"
SIZE = (120, 40)
TARGET_MS = 100.0


def wide_frame(rows: int, cols: int, seed: int = 2000) -> pd.DataFrame:
    """Invented loan-book measurements: a few curved predictors among many noise columns."""
    rng = np.random.default_rng(seed)
    x = rng.normal(size=(rows, cols)).round(3)
    logit = -1.0 + 0.8 * x[:, 0] ** 2 - 0.6 * x[:, 1] + 0.9 * np.maximum(x[:, 2] - 0.5, 0)
    y = (rng.uniform(size=rows) < 1 / (1 + np.exp(-logit))).astype(int)
    frame = pd.DataFrame(x, columns=[f"ratio_{i:04d}" for i in range(cols)])
    frame.insert(0, OUTCOME, y)
    return frame


Step = Callable[[object], Awaitable[None]]


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


# (what, step, repeats): each repeat is timed on its own.
STEPS: list[tuple[str, Step, int]] = [
    ("down (one row)", _press("down"), 30),
    ("page down", _press("pagedown"), 10),
    ("end / home", _press("end"), 5),
    ("home", _press("home"), 5),
    ("sort: next order (s)", _press("s"), 8),
    ("filter: one more letter", _press("9"), 1),  # after "/" and "ratio_0"
    ("filter: clear (escape)", _press("escape"), 1),
    ("open a column and back", _open_and_back(), 3),
]


async def _drive(folder: Path, cols: int, rows: int) -> tuple[float, dict[str, list[float]]]:
    data = folder / f"wide_{cols}.csv"
    wide_frame(rows, cols).to_csv(data, index=False)
    session = open_session(data, OUTCOME, log_path=folder / f"wide_{cols}.json")
    app = ReviewApp(session, scan_columns)
    times: dict[str, list[float]] = {}
    async with app.run_test(size=SIZE) as pilot:
        start = time.perf_counter()
        while not (session.scan_finished and not app.scanning()):
            await asyncio.sleep(0.05)
        await pilot.app.workers.wait_for_complete()
        await pilot.pause()
        filled = time.perf_counter() - start
        assert app.screen.query_one(TriageTable).row_count == cols
        for what, step, repeats in STEPS:
            if what.startswith("filter: one"):
                await pilot.press("slash", *"ratio_0")
                await pilot.pause()
            for _ in range(repeats):
                began = time.perf_counter()
                await step(pilot)
                await pilot.pause()
                times.setdefault(what, []).append((time.perf_counter() - began) * 1000)
    session.book.close()
    return filled, times


def _line(what: str, wide: list[float], narrow: list[float]) -> str:
    w_med, w_max = statistics.median(wide), max(wide)
    n_med = statistics.median(narrow)
    verdict = "ok" if w_max < TARGET_MS else "SLOW"
    return (
        f"| {what} | {len(wide)} | {w_med:.0f} | {w_max:.0f} | {n_med:.0f} | "
        f"{w_med - n_med:+.0f} | {verdict} |"
    )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--cols", type=int, default=2000)
    parser.add_argument("--rows", type=int, default=500)
    parser.add_argument("--results", type=Path, default=results_path("wide_app"))
    args = parser.parse_args()
    with recorded("wide_app", args.results), tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        filled, wide = asyncio.run(_drive(folder, args.cols, args.rows))
        _, narrow = asyncio.run(_drive(folder, 10, args.rows))
        print(f"# Review app on a wide file: {args.cols} columns x {args.rows} rows\n")
        print(f"List filled (scan of every column, worker processes): {filled:.1f} s.\n")
        print(
            "Milliseconds from the key press until the app has handled it and redrawn, "
            f"terminal {SIZE[0]}x{SIZE[1]}; the 10-column run gives the Pilot's own cost "
            f"per key. Target: every key under {TARGET_MS:.0f} ms on the wide file.\n"
        )
        print(
            f"| key | presses | {args.cols} cols median | {args.cols} cols max | "
            "10 cols median | difference | verdict |"
        )
        print("|---|---|---|---|---|---|---|")
        for what, _step, _n in STEPS:
            print(_line(what, wide[what], narrow[what]))
        print(
            "\n'open a column and back' includes fitting the column's candidate forms "
            "(engine work, not drawing); the other keys only redraw."
        )


if __name__ == "__main__":
    main()

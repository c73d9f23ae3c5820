"""The review app's first scan in two passes: the list is usable once every score is in,
the best forms fill in afterwards, and an opened column's forms are fitted next. Also the
column screen of a binned column: which figures are binned, and its exact score."""

from __future__ import annotations

import asyncio
import threading
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from app_fleet import NUMERIC, OUTCOME, quick_scanner, settle, write_fleet

from tui.app.app import ReviewApp
from tui.app.screens.inspect import InspectScreen
from tui.app.session import open_session
from tui.app.text import p_text
from tui.app.widgets.exactness_line import ExactnessLine
from tui.app.widgets.forms_table import FormsTable
from tui.app.widgets.line import Line
from tui.app.widgets.triage_table import PENDING, TriageTable
from tui.engine.forms.registry import default_candidates
from tui.engine.forms.spline import KNOT_PERCENTILES, spline_basis
from tui.engine.two_pass import TwoPassScan
from tui.table_rules import best_words

SIZE = (120, 30)
LOG = "fleet.recodings.json"


@pytest.fixture
def folder(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    monkeypatch.chdir(tmp_path)
    write_fleet(tmp_path)
    return tmp_path


class HeldTwoPass:
    """The engine's two-pass scan in this process, held once every score is in (before
    the second pass takes its first column) until ``release`` is set; remembers the order
    in which the forms arrive."""

    def __init__(self) -> None:
        self.release = threading.Event()
        self.held = threading.Event()
        self.forms_order: list[str] = []
        self.asked: list[str] = []
        self._scan: TwoPassScan | None = None

    def __call__(self, columns, values_of, y, settings, *, adjust=None):
        self._scan = TwoPassScan(columns, values_of, y, settings, workers=1, adjust=adjust)
        return self

    def __iter__(self):
        assert self._scan is not None
        for step in self._scan:
            if step.stage == "forms":
                self.forms_order.append(step.scan.column)
            yield step
            if step.stage == "score" and step.done == step.total:
                self.held.set()
                assert self.release.wait(timeout=30)

    def prioritise(self, column: str) -> bool:
        self.asked.append(column)
        return self._scan.prioritise(column)


def text_of(screen, selector: str) -> str:
    return str(screen.query_one(selector, Line).render())


def row_text(table: TriageTable, column: str) -> str:
    return "".join(c.plain for c in table.get_row(column))


async def until(pilot, ready, seconds: float = 20.0) -> None:
    for _ in range(int(seconds / 0.05)):
        if ready():
            return
        await pilot.pause(0.05)
    raise AssertionError("timed out")


def held_app(folder: Path) -> tuple[ReviewApp, HeldTwoPass]:
    held = HeldTwoPass()
    session = open_session(folder / "fleet.csv", OUTCOME, log_path=LOG)
    return ReviewApp(session, quick_scanner, two_pass=held), held


def test_the_list_is_sortable_and_openable_after_the_first_pass(folder: Path) -> None:
    app, held = held_app(folder)

    async def go() -> None:
        async with app.run_test(size=SIZE) as pilot:
            await until(pilot, held.held.is_set)
            await until(pilot, lambda: app.session.scan_finished)
            await pilot.pause(0.1)
            session, screen = app.session, app.screen
            table = screen.query_one(TriageTable)
            assert table.row_count == len(NUMERIC)
            assert "best forms 0/7" in text_of(screen, "#scanned")
            top = session.ranked[0]
            assert top.score is not None and not top.forms_fitted
            # q-values are in; the best form and ΔAIC are pending.
            assert p_text(top.q_value) in row_text(table, top.column)
            assert PENDING in row_text(table, top.column)
            await pilot.press("s")  # sorted by name
            await pilot.pause()
            assert table.highlighted_key() is not None
            assert screen.view.order == sorted(NUMERIC, key=str.lower)
            table.move_to_key(top.column)
            await pilot.press("enter")
            await until(pilot, lambda: isinstance(app.screen, InspectScreen))
            forms = app.screen.query_one(FormsTable)
            await until(pilot, lambda: forms.row_count > 0)
            assert forms.row_count == len(default_candidates())
            held.release.set()
            await pilot.press("escape")
            await settle(pilot)

    asyncio.run(go())


def test_best_forms_fill_in_as_the_one_pass_scan_gives_them(folder: Path) -> None:
    app, held = held_app(folder)
    session = app.session
    data = session.dataset
    one_pass = {
        s.column: s
        for s in quick_scanner(data.columns, data.raw_values, data.outcome.y, session.settings)
    }

    async def go() -> None:
        async with app.run_test(size=SIZE) as pilot:
            await until(pilot, held.held.is_set)
            held.release.set()
            await settle(pilot)
            table = app.screen.query_one(TriageTable)
            assert "7/7 columns scanned" in text_of(app.screen, "#scanned")
            assert sorted(held.forms_order) == sorted(NUMERIC)
            for scan in session.ranked:
                assert scan.forms_fitted
                same = one_pass[scan.column]
                assert (scan.best_form, scan.delta_aic, scan.score) == (
                    same.best_form,
                    same.delta_aic,
                    same.score,
                )
                if scan.best_form is not None:  # named only when it beats linear by 2 AIC
                    words = best_words(scan.best_form, scan.delta_aic)
                    assert words in row_text(table, scan.column)
                assert PENDING not in row_text(table, scan.column)

    asyncio.run(go())


def test_an_opened_column_jumps_the_second_pass_queue(folder: Path) -> None:
    app, held = held_app(folder)

    async def go() -> None:
        async with app.run_test(size=SIZE) as pilot:
            await until(pilot, held.held.is_set)
            await until(pilot, lambda: app.session.scan_finished)
            scored = [s.column for s in app.session.ranked if s.score is not None]
            last = scored[-1]  # the second pass would take it last of the scored ones
            table = app.screen.query_one(TriageTable)
            table.move_to_key(last)
            await pilot.press("enter")
            await until(pilot, lambda: isinstance(app.screen, InspectScreen))
            # The ask reaches the scan by message, possibly a frame after the screen opens.
            await until(pilot, lambda: bool(held.asked))
            assert held.asked == [last]
            held.release.set()
            await settle(pilot)
            assert held.forms_order[0] == last
            assert app.session.scan_of(last).forms_fitted

    asyncio.run(go())


def _statsmodels_score(x, y):
    # Reference library statsmodels: GLM Binomial on every row, spline against linear.
    ones = np.ones(x.size)
    knots = np.unique(np.quantile(x, KNOT_PERCENTILES[4]))
    family = sm.families.Binomial()
    lin = sm.GLM(y.astype(float), np.column_stack([ones, x]), family=family).fit()
    spl = sm.GLM(y.astype(float), np.column_stack([ones, spline_basis(x, knots)]), family=family)
    return lin.deviance - spl.fit().deviance


def test_a_binned_column_says_so_and_shows_its_exact_score(tmp_path: Path, monkeypatch) -> None:
    monkeypatch.chdir(tmp_path)
    rng = np.random.default_rng(515)
    x = rng.lognormal(1.0, 0.6, 12_000)  # 12,000 rows, every value distinct: binned
    eta = -1.0 + 0.8 * np.log(x) - 0.6 * (np.log(x) - 1.0) ** 2
    y = (rng.random(x.size) < 1 / (1 + np.exp(-eta))).astype(int)
    pd.DataFrame({"hit": y, "dose": x}).to_csv(tmp_path / "wide.csv", index=False)
    session = open_session(tmp_path / "wide.csv", "hit", log_path="wide.recodings.json")
    app = ReviewApp(session, quick_scanner)

    async def go() -> None:
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            assert not session.scan_of("dose").exact
            await pilot.press("enter")
            await until(pilot, lambda: isinstance(app.screen, InspectScreen))
            line = app.screen.query_one(ExactnessLine)
            await until(pilot, lambda: "exact on every value" in str(line.render()))
            words = str(line.render())
            assert line.display and "bins · 12,000 distinct values" in words
            exact = float(words.split("exact on every value: score ")[1].split(" ")[0])
            reference = _statsmodels_score(x, y)
            assert exact == pytest.approx(reference, rel=1e-3)  # shown to 3-4 figures

    asyncio.run(go())


def test_an_exact_column_has_no_binning_line(folder: Path) -> None:
    app = ReviewApp(open_session(folder / "fleet.csv", OUTCOME, log_path=LOG), quick_scanner)

    async def go() -> None:
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            await pilot.press("enter")
            await settle(pilot)
            assert isinstance(app.screen, InspectScreen)
            assert not app.screen.query_one(ExactnessLine).display

    asyncio.run(go())


def test_the_exact_score_of_a_binned_column_equals_statsmodels() -> None:
    from tui.engine.exact_score import exact_score
    from tui.engine.scan import ScanSettings, scan_column

    rng = np.random.default_rng(516)
    x = rng.lognormal(1.0, 0.6, 15_000)
    eta = -1.0 + 0.8 * np.log(x) - 0.6 * (np.log(x) - 1.0) ** 2
    y = (rng.random(x.size) < 1 / (1 + np.exp(-eta))).astype(int)
    binned, _ = scan_column("dose", x, y)
    exact = exact_score(x, y, ScanSettings(), "dose")
    assert not binned.exact and exact is not None and exact.exact
    reference = _statsmodels_score(x, y)
    assert exact.score == pytest.approx(reference, rel=1e-6)
    assert abs(binned.score - reference) > 1e-6 * reference  # the bins were not exact

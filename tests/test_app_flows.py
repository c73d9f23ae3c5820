"""The review app driven with Textual's Pilot: scan, inspect, decide, save, restart, remove."""

from __future__ import annotations

import asyncio
import json
import threading
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from app_fleet import NUMERIC, OUTCOME, quick_scanner, settle, write_fleet
from textual import events
from textual.widgets import Input

from tui import recodings
from tui.app.app import ReviewApp
from tui.app.screens.confirm_prompt import ConfirmPrompt
from tui.app.screens.decisions import DecisionsScreen, LogTable
from tui.app.screens.help_view import HelpView
from tui.app.screens.inspect import InspectScreen
from tui.app.screens.note_prompt import NotePrompt
from tui.app.screens.recorded_view import RecordedView
from tui.app.screens.triage import TriageScreen
from tui.app.screens.value_prompt import ValuePrompt, parse_value
from tui.app.session import ReviewSession, open_session
from tui.app.widgets.forms_table import FormsTable
from tui.app.widgets.key_table import CURSOR_MARK
from tui.app.widgets.line import Line
from tui.app.widgets.logit_plot import y_axis
from tui.app.widgets.triage_table import TriageTable
from tui.engine.counts import reduce_column
from tui.engine.forms.registry import default_candidates
from tui.engine.groups import logit_groups
from tui.engine.runner import scan_columns
from tui.engine.scan import ScanSettings, rank
from tui.intake.dataset import file_sha256

SIZE = (80, 24)
LOG = "fleet.recodings.json"


@pytest.fixture
def folder(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    monkeypatch.chdir(tmp_path)
    write_fleet(tmp_path)
    return tmp_path


def session_in(folder: Path) -> ReviewSession:
    return open_session(folder / "fleet.csv", OUTCOME, log_path=LOG)


def run(coro) -> None:
    asyncio.run(coro)


def text_of(screen, selector: str) -> str:
    return str(screen.query_one(selector, Line).render())


async def open_column(pilot, column: str) -> InspectScreen:
    """From the list, put the cursor on ``column`` and press Enter."""
    table = pilot.app.screen.query_one(TriageTable)
    table.move_to_key(column)
    assert table.highlighted_key() == column
    await pilot.press("enter")
    await settle(pilot)
    assert isinstance(pilot.app.screen, InspectScreen)
    return pilot.app.screen


async def fill_in(pilot, text: str) -> None:
    """Put ``text`` in the open prompt and press Enter (typing key by key is slow)."""
    pilot.app.screen.query_one(Input).value = text
    await pilot.press("enter")


async def highlight_form(pilot, key: str) -> None:
    """Put the candidate table's cursor on the form ``key`` (the redraw follows the cursor)."""
    table = pilot.app.screen.query_one(FormsTable)
    table.move_to_key(key)
    await pilot.pause()
    assert table.highlighted_key() == key


def test_scan_fills_the_list_in_the_engines_order(folder: Path) -> None:
    session = session_in(folder)
    data = session.dataset
    expected = rank(scan_columns(data.columns, data.raw_values, data.outcome.y, workers=1))

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            table = app.screen.query_one(TriageTable)
            keys = [table.coordinate_to_cell_key((i, 0))[0].value for i in range(table.row_count)]
            assert keys == [s.column for s in expected]
            assert sorted(keys) == sorted(NUMERIC)
            assert session.scan_finished
            assert "7/7 columns scanned" in text_of(app.screen, "#scanned")
            assert "not numeric: region" in text_of(app.screen, "#scanned")
            assert "0 of 7 decided" in text_of(app.screen, "#summary")
            top = [c.plain for c in table.get_row_at(0)]
            assert expected[0].column in top[0]
            assert "…" not in "".join(top)  # q-values are final

    run(go())


def test_the_list_is_usable_while_the_scan_runs(folder: Path) -> None:
    session = session_in(folder)
    release = threading.Event()

    def held_scanner(columns, values_of, y, settings, *, adjust=None):
        for i, result in enumerate(quick_scanner(columns, values_of, y, settings)):
            if i == 2:
                release.wait(timeout=30)
            yield result

    async def go() -> None:
        app = ReviewApp(session, held_scanner)
        async with app.run_test(size=SIZE) as pilot:
            for _ in range(50):
                await pilot.pause(0.05)
                if len(session.ranked) == 2:
                    break
            await pilot.pause(0.3)  # the list redraws at most every 0.2 s while scanning
            table = app.screen.query_one(TriageTable)
            assert table.row_count == 2
            assert "2/7 columns scanned" in text_of(app.screen, "#scanned")
            assert "…" in "".join(c.plain for c in table.get_row_at(0))  # q pending
            await pilot.press("enter")
            for _ in range(100):
                await pilot.pause(0.05)
                if app.screen.query_one(FormsTable).row_count:
                    break
            assert app.screen.query_one(FormsTable).row_count == len(default_candidates())
            release.set()
            await pilot.press("escape")
            await settle(pilot)
            assert app.screen.query_one(TriageTable).row_count == 7

    run(go())


def test_open_a_column_and_move_through_its_forms(folder: Path) -> None:
    async def go() -> None:
        app = ReviewApp(session_in(folder), quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "route_km")
            forms = screen.query_one(FormsTable)
            keys = [c.key for c in default_candidates()]  # rows are keyed by form key
            assert [
                forms.coordinate_to_cell_key((i, 0))[0].value for i in range(forms.row_count)
            ] == keys
            assert "route_km · 1 of 7 · undecided" in text_of(screen, "#heading")
            await pilot.press("j", "j", "j", "j")  # linear, log, FP1, FP2, quadratic
            assert forms.highlighted_key() == "quadratic"
            assert "quadratic" in text_of(screen, "#legend")
            await pilot.press("k")
            assert forms.highlighted_key() == "fp2"
            assert marked_rows(forms) == ["fp2"]  # the cursor shows without colour too
            await pilot.press("end")
            assert forms.highlighted_key() == keys[-1]
            assert marked_rows(forms) == [keys[-1]]
            await pilot.press("home")
            assert forms.highlighted_key() == keys[0]
            assert marked_rows(forms) == [keys[0]]
            table = screen.fits.table
            lowest = min((r for r in table.rows if np.isfinite(r.aic)), key=lambda r: r.aic)
            column = forms.get_column_index("best")
            words = {k: forms.get_row(k)[column].plain.strip() for k in keys}
            assert {k: w for k, w in words.items() if w} == {lowest.key: "best"}
            await pilot.press("escape")
            assert isinstance(app.screen, TriageScreen)
            triage = app.screen.query_one(TriageTable)
            await pilot.press("end")
            assert marked_rows(triage) == [triage.highlighted_key()] == [app.session.order[-1]]
            await pilot.press("home")
            assert marked_rows(triage) == [app.session.order[0]]

    run(go())


def marked_rows(table) -> list[str]:
    """Keys of the rows whose first cell starts with the cursor mark."""
    keys = [table.coordinate_to_cell_key((i, 0))[0].value for i in range(table.row_count)]
    return [k for k in keys if table.get_row(k)[0].plain.startswith(CURSOR_MARK)]


def test_the_column_screen_shows_counts_flags_and_percentiles(folder: Path) -> None:
    async def go() -> None:
        app = ReviewApp(session_in(folder), quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            session = app.session
            screen = await open_column(pilot, "van_age_years")
            profile = session.profile_of("van_age_years")
            assert profile.missing > 0
            counts = text_of(screen, "#counts")
            assert f"n {profile.n} · missing {profile.missing} · distinct" in counts
            evidence = text_of(screen, "#evidence")
            low, high = screen.fits.tails
            assert f"p5 {low:.6g} · p95 {high:.6g}" in evidence
            assert "% of rows" not in evidence
            await pilot.press("escape")
            await settle(pilot)
            flagged = session.scan_of("depot_code")
            assert flagged is not None and flagged.flags
            screen = await open_column(pilot, "depot_code")
            assert f"flags {', '.join(flagged.flags)}" in text_of(screen, "#counts")

    run(go())


def test_cycle_groups_and_knots(folder: Path) -> None:
    session = session_in(folder)
    counts = reduce_column(session.dataset.raw_values("route_km"), session.dataset.outcome.y)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "route_km")
            for groups in (5, 10, 20, 4):
                await pilot.press("g")
                await settle(pilot)
                assert screen.groups == groups
                assert screen.fits.groups == tuple(logit_groups(counts, groups))
                assert screen.fits.table.row("bands").label == f"bands, {groups} groups"
                assert f"g {groups} groups" in text_of(screen, "#settings")
            await pilot.press("s")
            await settle(pilot)
            assert screen.knots == 5
            # The knots key refits the spline row but leaves the highlight where it was.
            assert screen.query_one(FormsTable).highlighted_key() == "linear"
            assert screen.fits.table.row("spline").label == "spline, 5 knots"
            await highlight_form(pilot, "quadratic")
            await pilot.press("g", "g")  # the second comes before the first fits are in
            await settle(pilot)
            assert screen.groups == 10
            assert screen.query_one(FormsTable).highlighted_key() == "quadratic"

    run(go())


def test_enter_a_cut_point_by_hand(folder: Path) -> None:
    async def go() -> None:
        app = ReviewApp(session_in(folder), quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "parcel_kg")
            await pilot.press("c")
            assert isinstance(app.screen, ValuePrompt)
            await pilot.press(*"abc", "enter")
            assert isinstance(app.screen, ValuePrompt)  # still asking
            assert "not a number" in text_of(app.screen, "#problem")
            await fill_in(pilot, "1000")
            assert isinstance(app.screen, ValuePrompt)
            assert "outside the data" in text_of(app.screen, "#problem")
            await pilot.press("escape")
            assert app.screen is screen
            assert screen.query_one(FormsTable).row_count == len(default_candidates())

            await pilot.press("c", *"25", "enter")
            await settle(pilot)
            forms = screen.query_one(FormsTable)
            assert forms.highlighted_key() == "indicator@25.0"
            row = screen.highlighted()
            assert row.recoding.params == {"cut": 25.0}
            assert "entered by hand" in text_of(screen, "#notes")
            assert "Caution:" in text_of(screen, "#caution")

            await pilot.press("h")
            await fill_in(pilot, "30.5")
            await settle(pilot)
            assert forms.highlighted_key() == "hinge@30.5"

    run(go())


@pytest.mark.parametrize(
    ("typed", "value", "problem"),
    [
        ("25", 25.0, None),
        (" 1e1 ", 10.0, None),
        ("-0", None, "outside"),
        ("", None, "type a number"),
        ("abc", None, "not a number"),
        ("2,5", None, "not a number"),
        ("nan", None, "not a finite number"),
        ("inf", None, "not a finite number"),
        ("0.5", None, "outside"),
        ("99", None, "outside"),
        ("2", None, "outside"),  # the lowest value itself leaves nothing below the cut
    ],
)
def test_parse_value(typed: str, value: float | None, problem: str | None) -> None:
    if problem is None:
        assert parse_value(typed, 2.0, 99.0) == value
    else:
        with pytest.raises(ValueError, match=problem):
            parse_value(typed, 2.0, 99.0)


def test_accept_saves_the_log_and_shows_the_recoded_rows(folder: Path) -> None:
    session = session_in(folder)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "route_km")
            await highlight_form(pilot, "quadratic")
            row = screen.highlighted()
            await pilot.press("a")
            await pilot.pause()
            assert isinstance(app.screen, RecordedView)
            assert (folder / LOG).exists()  # written at once, before any key is pressed

            cells = [list(col.cells) for col in app.screen.preview.columns]
            x = session.dataset.values("route_km")[:8]
            replayed = recodings.apply_to_frame(
                recodings.load_log(folder / LOG), pd.DataFrame({"route_km": x})
            )
            assert cells[1] == [f"{v:.6g}" for v in x]
            assert cells[2] == [f"{v:.6g}" for v in replayed["route_km__lin"]]
            assert cells[3] == [f"{v:.6g}" for v in replayed["route_km__sq"]]

            await pilot.press("enter")
            assert app.screen is screen
            assert "decided: quadratic" in text_of(screen, "#heading")
            form_cell = screen.query_one(FormsTable).get_row("quadratic")[0].plain
            assert form_cell.startswith(f"{CURSOR_MARK}✓ quadratic")

            saved = recodings.load_log(folder / LOG)
            decision = saved.decision_for("route_km")
            assert decision.recoding == row.recoding
            assert decision.outputs == ("route_km__lin", "route_km__sq")
            scan = session.scan_of("route_km")
            assert decision.evidence["score"] == pytest.approx(scan.score)
            assert decision.evidence["delta_aic"] == pytest.approx(row.delta_aic)
            assert decision.evidence["df"] == row.df == 2
            assert decision.range == (5.0, 94.8)
            document = json.loads((folder / LOG).read_text())
            assert document["source"]["name"] == "fleet.csv"
            assert document["recodings"][0]["kind"] == "quadratic"

    run(go())


def test_restart_with_the_same_log_shows_the_decision_then_remove_it(folder: Path) -> None:
    async def decide() -> None:
        app = ReviewApp(session_in(folder), quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            await open_column(pilot, "route_km")
            await highlight_form(pilot, "spline")
            await pilot.press("a", "enter", "n")
            await fill_in(pilot, "long routes are late")
            await pilot.press("q")

    async def again() -> None:
        session = session_in(folder)
        assert session.decision_word("route_km") == "spline, 4 knots"
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            table = app.screen.query_one(TriageTable)
            name = table.get_row("route_km")[0].plain
            assert name[1:].startswith("✓") and "route_km" in name
            assert "1 of 7 decided" in text_of(app.screen, "#summary")
            await pilot.press("L")
            assert isinstance(app.screen, DecisionsScreen)
            assert "1 recoded · 0 kept linear · 0 set aside · saved" in text_of(app.screen, "#file")
            assert "note: long routes are late" in text_of(app.screen, "#detail")
            await pilot.press("r")
            assert isinstance(app.screen, ConfirmPrompt)
            await pilot.press("n")
            assert recodings.load_log(folder / LOG).decisions  # still there
            await pilot.press("delete", "y")
            await pilot.pause()
            assert app.screen.query_one(LogTable).row_count == 0
            assert recodings.load_log(folder / LOG).decisions == ()
            await pilot.press("escape")
            assert "0 of 7 decided" in text_of(app.screen, "#summary")
            name = app.screen.query_one(TriageTable).get_row("route_km")[0].plain
            assert name[1] == " "  # no decision mark (the first cell is the cursor's)

    run(decide())
    assert recodings.load_log(folder / LOG).decision_for("route_km").note == "long routes are late"
    run(again())


def test_keep_linear_set_aside_and_notes(folder: Path) -> None:
    session = session_in(folder)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "stops")
            await pilot.press("n")
            assert isinstance(app.screen, NotePrompt)
            await fill_in(pilot, "counts rise evenly")
            assert not (folder / LOG).exists()  # a note alone waits for the decision
            assert "note: counts rise evenly" in text_of(screen, "#note")
            await pilot.press("l", "escape")
            saved = recodings.load_log(folder / LOG).decision_for("stops")
            assert saved.recoding.kind == "linear"
            assert saved.note == "counts rise evenly"
            assert session.decision_word("stops") == "kept linear"

            await pilot.press("]")
            nxt = session.order[session.order.index("stops") + 1]
            assert screen.column == nxt
            await pilot.press("[")
            assert screen.column == "stops"

            await pilot.press("x")
            log = recodings.load_log(folder / LOG)
            assert log.is_set_aside("stops") and log.decision_for("stops") is None
            await pilot.press("n")
            await fill_in(pilot, "no use")
            assert recodings.load_log(folder / LOG).set_aside[0].note == "no use"

    run(go())


def test_two_valued_column_can_be_kept_linear(folder: Path) -> None:
    async def go() -> None:
        app = ReviewApp(session_in(folder), quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "night_shift")
            assert "two values only" in text_of(screen, "#notes")
            assert screen.query_one(FormsTable).row_count == 1
            await pilot.press("l", "enter")
            saved = recodings.load_log(folder / LOG).decision_for("night_shift")
            assert saved.recoding.kind == "linear"

    run(go())


def test_filter_sort_and_hide_decided(folder: Path) -> None:
    session = session_in(folder)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            table = app.screen.query_one(TriageTable)

            def keys() -> list[str]:
                return [
                    table.coordinate_to_cell_key((i, 0))[0].value for i in range(table.row_count)
                ]

            await pilot.press("slash", *"de")
            assert set(keys()) == {"depot_temp_c", "depot_code"}
            await pilot.press("enter", "escape")
            assert len(keys()) == 7
            await pilot.press("s")
            assert keys() == sorted(NUMERIC)
            assert "sorted by name" in text_of(app.screen, "#summary")
            await pilot.press("s", "s")
            assert keys() == NUMERIC  # file order
            await pilot.press("s")
            assert "sorted by evidence" in text_of(app.screen, "#summary")

            await open_column(pilot, "stops")
            await pilot.press("x", "escape")
            await pilot.press("d")
            assert "stops" not in keys() and len(keys()) == 6
            assert "decided hidden" in text_of(app.screen, "#summary")
            await pilot.press("d")
            assert "stops" in keys()

    run(go())


def test_keys_typed_quickly_after_the_slash_reach_the_filter(folder: Path) -> None:
    async def go() -> None:
        app = ReviewApp(session_in(folder), quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            # All at once, as a fast typist or a paste delivers them; "d" is also a key of
            # the list (hide decided) and must not act here.
            for key in ("slash", "d", "e", "p"):
                app._driver.send_message(events.Key(key, "/" if key == "slash" else key))
            await pilot.pause(0.3)
            assert app.screen.query_one("#filter", Input).value == "dep"
            assert not app.screen.hide_decided
            assert app.screen.query_one(TriageTable).row_count == 2  # depot_temp_c, depot_code

    run(go())


def test_help_lists_every_key_of_every_screen(folder: Path) -> None:
    async def go() -> None:
        app = ReviewApp(session_in(folder), quick_scanner)
        async with app.run_test(size=(120, 40)) as pilot:
            await settle(pilot)
            await pilot.press("question_mark")
            assert isinstance(app.screen, HelpView)
            shown = "\n".join(str(w.render()) for w in app.screen.query(Line))
            for _, bindings in app.help_sections():
                for b in bindings:
                    if b.action.startswith("app."):
                        continue
                    assert (b.tooltip or b.description) in shown, b
            for text in (
                "Accept the highlighted form",
                "Type a cut point",
                "Remove the highlighted",
            ):
                assert text in shown
            await pilot.press("escape")
            assert isinstance(app.screen, TriageScreen)

    run(go())


def test_command_palette_runs_screen_actions(folder: Path) -> None:
    async def go() -> None:
        app = ReviewApp(session_in(folder), quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            triage = app.screen
            await pilot.press("ctrl+p")
            await pilot.press(*"Sort by")
            await pilot.pause(0.3)
            await pilot.press("enter")
            await settle(pilot)
            assert triage.sort == "name"

    run(go())


def test_a_log_written_for_other_data_is_flagged(folder: Path) -> None:
    async def decide() -> None:
        app = ReviewApp(session_in(folder), quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            await open_column(pilot, "route_km")
            await pilot.press("l", "enter", "q")

    run(decide())
    frame = pd.read_csv(folder / "fleet.csv")
    frame.loc[0, "stops"] += 1
    frame.to_csv(folder / "fleet.csv", index=False)
    session = session_in(folder)
    assert session.source_warning and "sha256 differs" in session.source_warning

    async def check() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            assert "sha256 differs" in text_of(app.screen, "#warning")
            assert app.screen.query_one("#warning").display
            assert session.decision_word("route_km") == "kept linear"
            # The toast is one short line; the full text stays on the warning line.
            toasts = [n.message for n in app._notifications]
            assert toasts and all(len(t) < 60 and "\n" not in t for t in toasts)
            await open_column(pilot, "stops")
            await pilot.press("l", "enter")

    run(check())
    saved = recodings.load_log(folder / LOG)
    assert saved.source.sha256 != file_sha256(folder / "fleet.csv")  # the first data's
    judged_on = saved.decision_for("stops").evidence["data"]
    assert judged_on == {"name": "fleet.csv", "sha256": file_sha256(folder / "fleet.csv")}
    assert saved.decision_for("route_km").evidence["data"]["sha256"] == saved.source.sha256

    run(check())


def test_a_failed_save_says_so_and_records_nothing(folder: Path) -> None:
    (folder / "logs").mkdir()
    session = open_session(folder / "fleet.csv", OUTCOME, log_path=folder / "logs" / "x.json")
    session.book.close()  # drop the lock file, so that the folder can go
    (folder / "logs").rmdir()  # the folder vanishes after the start

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "route_km")
            await pilot.press("l")
            await pilot.pause()
            assert app.screen is screen  # no "saved" view
            assert session.log.decisions == ()
            assert any("NOT SAVED" in n.message for n in app._notifications)

    run(go())


def test_the_parallel_scan_runs_inside_the_app(folder: Path) -> None:
    async def go() -> None:
        app = ReviewApp(session_in(folder))  # the engine's default: worker processes
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            assert "7/7 columns scanned" in text_of(app.screen, "#scanned")
            assert app.screen.query_one(TriageTable).row_count == 7

    run(go())


def test_no_color_turns_the_app_monochrome(folder: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    from textual.filter import Monochrome, NoColor

    monkeypatch.setenv("NO_COLOR", "1")
    app = ReviewApp(session_in(folder), quick_scanner)
    assert any(isinstance(f, Monochrome | NoColor) for f in app._filters)


def test_settings_from_the_command_line_start_the_inspection(folder: Path) -> None:
    session = open_session(
        folder / "fleet.csv", OUTCOME, log_path=LOG, settings=ScanSettings(groups=10, knots=3)
    )

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "route_km")
            assert (screen.groups, screen.knots) == (10, 3)
            assert screen.fits.table.row("spline").label == "spline, 3 knots"
            assert len(screen.fits.groups) == 10
            await pilot.press("g")
            assert screen.groups == 20

    run(go())


def test_inputs_are_text_not_markup(folder: Path) -> None:
    frame = pd.read_csv(folder / "fleet.csv").rename(columns={"stops": "stops[per route]"})
    frame.to_csv(folder / "fleet.csv", index=False)

    async def go() -> None:
        app = ReviewApp(session_in(folder), quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = await open_column(pilot, "stops[per route]")
            assert "stops[per route]" in text_of(screen, "#heading")
            await pilot.press("n")
            await fill_in(pilot, "[bold]not markup[/]")
            assert "[bold]not markup[/]" in text_of(screen, "#note")

    run(go())


def test_evidence_is_plain_json(folder: Path) -> None:
    session = session_in(folder)
    data = session.dataset
    session.ranked = rank(scan_columns(data.columns, data.raw_values, data.outcome.y, workers=1))
    session.scan_finished = True
    from tui.engine.compare import compare_forms

    counts = reduce_column(data.raw_values("van_age_years"), data.outcome.y)
    row = compare_forms(counts).row("log")
    decision = session.accept("van_age_years", row, 4, 4)
    assert all(
        v is None or isinstance(v, bool | int | float | str | list)
        for k, v in decision.evidence.items()
        if k != "data"
    )
    sha = file_sha256(folder / "fleet.csv")
    assert decision.evidence["data"] == {"name": "fleet.csv", "sha256": sha}
    assert decision.evidence["lr_p"] is None  # no test against linear for log: shown as "-"
    assert np.isfinite(decision.evidence["aic"])


@pytest.mark.parametrize(
    ("bottom", "top", "rows"), [(-2.2, -1.1, 7), (-2.18, 2.02, 6), (0.4, 2.9, 19), (-0.3, -0.1, 2)]
)
def test_y_ticks_are_evenly_spaced_and_sit_on_canvas_rows(bottom, top, rows) -> None:
    low, high, ticks, labels = y_axis(bottom, top, rows)
    assert low <= bottom and high >= top
    steps = np.diff(ticks)
    assert np.allclose(steps, steps[0]) and steps[0] > 0
    # plotext's own mapping of a value to a canvas row (plotext/_utility.py get_matrix_data)
    position = [0.5 + (rows - 1) * (t - low) / (high - low) for t in ticks]
    assert all(abs(p - 0.5 - round(p - 0.5)) < 1e-6 for p in position)
    assert [float(label) for label in labels] == pytest.approx(ticks)

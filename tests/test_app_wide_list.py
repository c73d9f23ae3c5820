"""Pilot tests of the column list's fast paths: rows added at once, cells kept between
fills, a filter cleared with one redraw. Each checks what the screen shows, never a time
(timings are in benchmarks/wide_app.py)."""

from __future__ import annotations

import asyncio
from pathlib import Path

import pytest
from app_fleet import OUTCOME, quick_scanner, settle, write_fleet
from textual.app import App, ComposeResult

from tui.app.app import ReviewApp
from tui.app.screens.triage import TriageScreen
from tui.app.session import open_session
from tui.app.widgets.key_table import ColumnSpec, KeyTable
from tui.app.widgets.line import Line
from tui.app.widgets.triage_table import TriageTable

SIZE = (100, 30)
LOG = "fleet.recodings.json"


class Plain(KeyTable):
    SPECS = (
        ColumnSpec("name", "name", 8, 12, False, 0),
        ColumnSpec("value", "value", 5, 6, True, 1),
        ColumnSpec("note", "note", 6, 20, False, 2),
    )


class OneByOne(Plain):
    """The same table, its rows added by DataTable's own add_row and re-sorted by its own
    sort."""

    def _add_all(self, rows) -> None:  # noqa: ANN001
        for key, kept in rows:
            self.add_row(*kept.cells, key=key)

    def _reorder(self) -> None:
        place = {key: i for i, (key, _) in enumerate(self._rows)}
        self.sort(self._shown[0][0].key, key=lambda lead: place[lead.key])


class Pair(App[None]):
    def compose(self) -> ComposeResult:
        yield Plain(id="fast")
        yield OneByOne(id="slow")


def rows_of(count: int, suffix: str = "") -> list[tuple[str, dict[str, str]]]:
    return [
        (f"c{i:03d}", {"name": f"c{i:03d}", "value": str(i * 7 % 100), "note": f"n{i}{suffix}"})
        for i in range(count)
    ]


def table_state(table: KeyTable) -> tuple:
    """What a user can see or reach: keys in order, each row's text, the cursor, the
    scrollable height and the visible lines."""
    keys = [table.coordinate_to_cell_key((i, 0)).row_key.value for i in range(table.row_count)]
    texts = [tuple(c.plain for c in table.get_row_at(i)) for i in range(table.row_count)]
    lines = [table.render_line(y).text for y in range(table.size.height)]
    return keys, texts, table.highlighted_key(), table.virtual_size.height, lines


def test_rows_added_at_once_equal_rows_added_one_by_one() -> None:
    async def go() -> None:
        app = Pair()
        async with app.run_test(size=(60, 40)) as pilot:
            fast, slow = app.query_one("#fast", Plain), app.query_one("#slow", Plain)
            for rows in (rows_of(40), rows_of(40)[::-1], rows_of(12), rows_of(40, "x")):
                for table in (fast, slow):
                    table.show_rows(rows)
                await pilot.pause()
                assert table_state(fast) == table_state(slow)
                assert fast.row_count == len(rows)
            for table in (fast, slow):
                table.focus()
                await pilot.press("down", "down", "pagedown", "up")
                await pilot.pause()
            assert table_state(fast) == table_state(slow)
            assert fast.cursor_row > 2  # the keys moved it

    asyncio.run(go())


def test_a_row_whose_text_changed_is_drawn_anew_the_others_keep_their_cells() -> None:
    async def go() -> None:
        app = Pair()
        async with app.run_test(size=(60, 40)) as pilot:
            table = app.query_one("#fast", Plain)
            rows = rows_of(10)
            table.show_rows(rows)
            await pilot.pause()
            before = {i: table.get_row_at(i) for i in range(10)}
            # Same length: the widths stay, so only c003's cells need cutting anew.
            changed = [(k, dict(f, note="m3") if k == "c003" else f) for k, f in rows]
            table.show_rows(changed[:5])  # a filter, then the whole list again
            table.show_rows(changed)
            await pilot.pause()
            after = {i: table.get_row_at(i) for i in range(10)}
            assert after[3][2].plain.strip() == "m3"
            assert after[3][2] is not before[3][2]
            assert all(after[i][2] is before[i][2] for i in range(10) if i != 3)

    asyncio.run(go())


@pytest.fixture
def folder(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    monkeypatch.chdir(tmp_path)
    write_fleet(tmp_path)
    return tmp_path


def test_clearing_the_filter_shows_every_column_again_with_decisions_made_meanwhile(
    folder: Path,
) -> None:
    session = open_session(folder / "fleet.csv", OUTCOME, log_path=LOG)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=SIZE) as pilot:
            await settle(pilot)
            screen = app.screen
            table = screen.query_one(TriageTable)
            everything = [table.coordinate_to_cell_key((i, 0)).row_key.value for i in range(7)]
            await pilot.press("slash", *"st", "enter")
            await pilot.pause()
            assert table.row_count == 1 and table.highlighted_key() == "stops"
            await pilot.press("enter")
            await settle(pilot)
            await pilot.press("x")  # set aside while the list is filtered
            await settle(pilot)
            await pilot.press("escape")
            await settle(pilot)
            assert isinstance(app.screen, TriageScreen)
            redraws = []
            original = screen.redraw
            screen.redraw = lambda: (redraws.append(1), original())[1]
            await pilot.press("slash", "escape")  # clear the filter
            await settle(pilot)
            assert len(redraws) == 1  # the emptied box asks for none of its own
            shown = [table.coordinate_to_cell_key((i, 0)).row_key.value for i in range(7)]
            assert shown == everything
            assert table.highlighted_key() == "stops"  # the cursor stayed on its column
            row = [c.plain for c in table.get_row_at(table.cursor_row)]
            assert row[0].split() == ["▸×", "stops"]  # the set-aside mark, drawn anew
            assert "names containing" not in str(screen.query_one("#summary", Line).render())

    asyncio.run(go())


def test_cells_drawn_directly_equal_datatables_own_drawing() -> None:
    # Every visible cell in every state the list has: zebra rows, the cursor row (its
    # mark), the hover row, focused and not; headers are DataTable's own in both.
    from textual.widgets import DataTable

    async def go() -> None:
        app = Pair()
        async with app.run_test(size=(60, 40)) as pilot:
            table = app.query_one("#fast", Plain)
            table.show_rows(rows_of(30))
            await pilot.pause()
            table.focus()
            await pilot.press("down", "down")
            table.hover_coordinate = table.cursor_coordinate.down()
            await pilot.pause()
            compared = 0
            for focused in (True, False):
                if not focused:
                    app.query_one("#slow", Plain).focus()
                    await pilot.pause()
                for row in range(8):
                    for column in range(len(table.columns)):
                        width = table.ordered_columns[column].get_render_width(table)
                        for cursor, hover in ((False, False), (True, False), (False, True)):
                            style = table._get_row_style(row, table.rich_style)
                            args = (row, column, style, width, cursor, hover)
                            direct = table._render_cell(*args)
                            table._cell_render_cache.clear()
                            own = DataTable._render_cell(table, *args)
                            assert direct == own, (row, column, cursor, hover)
                            compared += 1
            assert compared == 2 * 8 * 3 * 3
            assert table._plain_cell(0, 0, table.ordered_columns[0].get_render_width(table))

    asyncio.run(go())


def test_a_filter_with_other_widths_keeps_the_whole_lists_cells() -> None:
    async def go() -> None:
        app = Pair()
        async with app.run_test(size=(60, 40)) as pilot:
            table = app.query_one("#fast", Plain)
            rows = rows_of(20)
            rows[10] = ("c010", dict(rows[10][1], note="a longer note"))
            table.show_rows(rows)
            await pilot.pause()
            whole = [table.get_row_at(i) for i in range(20)]
            note_width = table.ordered_columns[2].width
            table.show_rows(rows[:2])  # notes n0 and n1 only: a narrower note column
            await pilot.pause()
            assert table.ordered_columns[2].width < note_width
            table.show_rows(rows)
            await pilot.pause()
            again = [table.get_row_at(i) for i in range(20)]
            pairs = zip(whole, again, strict=True)
            assert all(a is b for old, new in pairs for a, b in zip(old, new, strict=True))
            assert [c.plain for c in again[5]] == [c.plain for c in whole[5]]

    asyncio.run(go())

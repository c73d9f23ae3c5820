"""A row-cursor table that also moves with j and k, and fits its columns to the width."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import ClassVar

from rich.cells import cell_len
from rich.console import Console, ConsoleOptions, RenderResult
from rich.segment import Segment
from rich.style import Style
from rich.text import Text
from textual import events
from textual.binding import Binding
from textual.coordinate import Coordinate
from textual.widgets import DataTable
from textual.widgets.data_table import Row as TableRow
from textual.widgets.data_table import RowDoesNotExist, RowKey


@dataclass(frozen=True)
class ColumnSpec:
    """One column a table may show."""

    key: str
    """Column key."""
    header: str
    """Header text."""
    width: int
    """Narrowest useful width."""
    widest: int
    """Widest useful width (extra room goes to columns that can use it)."""
    right: bool
    """Numbers are right-aligned."""
    priority: int
    """Lower numbers are kept first when the terminal is narrow."""


def fit_columns(specs: Sequence[ColumnSpec], room: int) -> list[tuple[ColumnSpec, int]]:
    """The columns that fit in ``room`` cells (one blank cell before each), in display
    order, with their widths. Columns are kept by priority; leftover room widens them."""
    chosen: set[str] = set()
    used = 0
    for spec in sorted(specs, key=lambda s: s.priority):
        if used + spec.width + 1 <= room:
            chosen.add(spec.key)
            used += spec.width + 1
    widths = {s.key: s.width for s in specs if s.key in chosen}
    spare = room - used
    for spec in sorted(specs, key=lambda s: s.priority):
        if spec.key in chosen and spare > 0:
            extra = min(spare, spec.widest - spec.width)
            widths[spec.key] += extra
            spare -= extra
    return [(s, widths[s.key]) for s in specs if s.key in chosen]


CURSOR_MARK = "▸"
"""Put before the first field of the row under the cursor, so the cursor shows without
colour too (NO_COLOR)."""


class CellText(Text):
    """Text already cut to its column's width. DataTable measures every new cell to size
    columns that fit their content; these columns have fixed widths, and measuring 2,000
    rows of fields took over a second, so a cell offers no measure."""

    __rich_measure__ = None  # type: ignore[assignment]


def cell(text: str, width: int, right: bool, lead: str = " ") -> Text:
    """A cell's text cut to its width, with ``lead`` (one cell) before it."""
    if len(text) > width:
        text = text[: width - 1] + "…"
    return CellText(lead + (text.rjust(width) if right else text.ljust(width)))


Row = tuple[str, dict[str, str]]
"""A row key and the text of each field."""


class LeadCell:
    """The first field of a row, drawn with CURSOR_MARK while the cursor is on the row.

    Deciding at draw time keeps moving the cursor cheap: DataTable keeps the drawing of
    each cell, separately for the cursor row, until any cell changes; writing the mark into
    the cells would make it draw every visible cell again on each key."""

    def __init__(self, table: KeyTable, key: str, text: str, width: int, right: bool) -> None:
        self._table, self.key = table, key
        self._plain, self._marked = cell(text, width, right), cell(text, width, right, CURSOR_MARK)

    @property
    def text(self) -> Text:
        """The cell as drawn now."""
        on = self._table.highlighted_key() == self.key
        return self._marked if on else self._plain

    @property
    def plain(self) -> str:
        """The text drawn now, mark included."""
        return self.text.plain

    def __rich_console__(self, console: Console, options: ConsoleOptions) -> RenderResult:
        yield self.text


@dataclass(eq=False)
class Kept:
    """A row's cells as cut from its fields, and the table's entries made from them (its
    key, its cells by column, its row), so a refill puts back what was made before."""

    fields: dict[str, str]
    cells: tuple[object, ...]
    entries: tuple[RowKey, dict, TableRow] | None = None


AWAY = Coordinate(-2, 0)
"""A cursor place on no row (the header is row -1)."""

KEPT_WIDTHS = 3
"""Sets of columns and widths whose cells a table keeps (the whole list's and a filter's)."""


class KeyTable(DataTable):
    """Row cursor, zebra stripes, j/k as well as the arrows; the fields shown follow the
    width (``SPECS`` lists them), so nothing scrolls sideways."""

    SPECS: ClassVar[tuple[ColumnSpec, ...]] = ()

    steady_columns: ClassVar[bool] = False
    """Which columns show depends on the width alone, never on the rows' text (so filtering
    or re-scoring never makes a column come or go)."""

    hold_widths = False
    """While true, columns shown keep at least their width (rows being replaced one by one
    would otherwise make the columns jump as the longest text comes and goes)."""

    BINDINGS = [
        Binding("j", "cursor_down", "Down", show=False),
        Binding("k", "cursor_up", "Up", show=False),
        # Rows, not sideways scrolling: nothing here scrolls sideways (see SPECS).
        Binding("home", "scroll_top", "First row", show=False),
        Binding("end", "scroll_bottom", "Last row", show=False),
    ]

    def __init__(self, *, id: str | None = None) -> None:  # noqa: A002 (Textual's name)
        super().__init__(id=id, cursor_type="row", zebra_stripes=True, cell_padding=0)
        self._shown: list[tuple[ColumnSpec, int]] = []
        self._rows: list[Row] = []
        # Each row's cells by the widths they were cut to, with the fields they were cut
        # from: a filter cleared or a list re-scored re-adds rows whose text has not
        # changed. A filtered list may have other widths (its longest numbers), so the
        # cells of the last few sets of widths are kept.
        self._cells: dict[tuple[int, ...], dict[str, Kept]] = {}
        self._longest_of: dict[str, int] | None = None  # of the rows shown, by field
        self._longest_kept: dict[tuple[int, ...], tuple[list[Row], dict[str, int]]] = {}
        # Each row's text lengths by field, with the fields they were measured from: a
        # filter or a re-sort asks for the longest text of thousands of unchanged rows.
        self._lengths: dict[str, tuple[dict[str, str], dict[str, int]]] = {}

    def on_resize(self, event: events.Resize) -> None:
        self._layout(event.size.width)

    def show_rows(self, rows: Sequence[Row]) -> None:
        """Show these rows, keeping the cursor on the same key where possible."""
        same = len(rows) == len(self._rows) and dict(rows) == dict(self._rows)
        # The same rows in the same order (the list shown again after a column): the
        # table, and its drawing, stay as they are.
        unmoved = same and all(a[0] == b[0] for a, b in zip(rows, self._rows, strict=True))
        self._rows = list(rows)
        if not same:
            self._longest_of = None
        if self._layout(self.size.width or 80):
            return
        key = self.highlighted_key()
        if same and self._shown and self.row_count == len(rows):
            if not unmoved:
                self._reorder()  # the same rows in another order: nothing to draw anew
        else:
            self._fill()
        self.move_to_key(key)

    def _reorder(self) -> None:
        """Give every row its new place at once (DataTable's ``sort`` sorts the rows'
        cells to learn what is already known here)."""
        if not hasattr(self, "_row_locations"):  # another Textual: its own sort
            place = {key: i for i, (key, _) in enumerate(self._rows)}
            self.sort(self._shown[0][0].key, key=lambda lead: place[lead.key])
            return
        keys = {key.value: key for key in self._data}
        places = {keys[key]: i for i, (key, _) in enumerate(self._rows)}
        self._row_locations = type(self._row_locations)(places)  # DataTable's two-way map
        self._update_count += 1
        self.refresh()

    def highlighted_key(self) -> str | None:
        """The key of the row under the cursor."""
        if not self.row_count:
            return None
        row_key, _ = self.coordinate_to_cell_key(self.cursor_coordinate)
        return row_key.value

    def move_to_key(self, key: str | None) -> None:
        """Put the cursor on the row with this key (the first row when it is gone)."""
        if not self.row_count:
            return
        try:
            index = self.get_row_index(key) if key is not None else 0
        except RowDoesNotExist:  # filtered out, or not there yet
            index = 0
        self.move_cursor(row=index, animate=False)

    def specs(self) -> tuple[ColumnSpec, ...]:
        """The columns this table may show now (all of ``SPECS`` unless overridden)."""
        return self.SPECS

    def _layout(self, width: int) -> bool:
        """Choose the columns for this width; True when they changed (and were refilled)."""
        specs = []
        held = {s.key: w for s, w in self._shown} if self.hold_widths else {}
        for spec in self.specs():
            longest = self._longest(spec)  # room beyond the longest text is wasted
            narrow = longest if spec.right else min(spec.width, longest)  # numbers never cut
            if self.steady_columns:
                narrow = max(narrow, spec.width) if spec.right else spec.width
            widest = max(narrow, min(spec.widest, longest))
            if spec.key in held:  # shown already: keep its width while rows are replaced
                narrow = max(narrow, held[spec.key])
                widest = max(widest, narrow)
            specs.append(replace(spec, width=narrow, widest=widest))
        shown = fit_columns(specs, max(width - 1, 20))  # one cell for the scrollbar
        if [(s.key, w) for s, w in shown] == [(s.key, w) for s, w in self._shown]:
            return False
        key = self.highlighted_key()
        self._shown = shown
        self.clear(columns=True)
        for spec, w in shown:
            self.add_column(cell(spec.header, w, spec.right), key=spec.key, width=w + 1)
        self._fill()
        self.move_to_key(key)
        return True

    def _longest(self, spec: ColumnSpec) -> int:
        """The longest text of a column, header included (the rows' lengths are found
        once per set of rows: a resize or a re-layout asks again)."""
        if self._longest_of is None:
            # The same rows again (a filter cleared, a letter taken back): their longest
            # texts are kept, by the rows' fields (kept objects while their text is the same).
            rows = tuple(id(fields) for _, fields in self._rows)
            kept = self._longest_kept.pop(rows, None)
            if kept is None:
                longest: dict[str, int] = {}
                for key, fields in self._rows:
                    for field, length in self._lengths_of(key, fields).items():
                        if length > longest.get(field, 0):
                            longest[field] = length
                kept = (list(self._rows), longest)  # the rows keep their ids taken
            self._longest_kept[rows] = kept  # the latest last
            while len(self._longest_kept) > KEPT_WIDTHS:
                del self._longest_kept[next(iter(self._longest_kept))]
            self._longest_of = kept[1]
        return max(len(spec.header), self._longest_of.get(spec.key, 0))

    def _lengths_of(self, key: str, fields: dict[str, str]) -> dict[str, int]:
        """The length of each field's text (kept while the row's text is the same)."""
        old = self._lengths.get(key)
        if old is not None and old[0] is fields:
            return old[1]
        lengths = {field: len(text) for field, text in fields.items()}
        self._lengths[key] = (fields, lengths)
        return lengths

    def _fill(self) -> None:
        self.clear()
        if not self._shown:
            return
        widths = tuple((s.key, w) for s, w in self._shown)
        kept = self._cells.pop(widths, {})
        self._cells[widths] = kept  # the latest last
        while len(self._cells) > KEPT_WIDTHS:
            del self._cells[next(iter(self._cells))]
        self._add_all([(key, self._row_cells(kept, key, fields)) for key, fields in self._rows])

    def _row_cells(self, kept: dict[str, Kept], key: str, fields: dict[str, str]) -> Kept:
        """The row's cells: those kept from an earlier fill at these widths when its text
        is the same (cutting 2,000 rows of text anew took a quarter of a second)."""
        old = kept.get(key)
        if old is not None and old.fields == fields:
            return old
        (first, width), rest = self._shown[0], self._shown[1:]
        lead = LeadCell(self, key, fields[first.key], width, first.right)
        cells = (lead, *(cell(fields[s.key], w, s.right) for s, w in rest))
        kept[key] = Kept(fields, cells)
        return kept[key]

    def _render_line_in_row(
        self,
        row_key: RowKey,
        line_no: int,
        base_style: Style,
        cursor_location: Coordinate,
        hover_location: Coordinate,
    ) -> tuple[list, list]:
        """A row's drawing, kept while the row is away from the cursor.

        DataTable keeps each row's drawing under the cursor's place, so every move of the
        cursor drew every visible row again (a third of a key's time beside 2,000 rows). A
        row cursor only changes the row it is on: elsewhere the place is given as "on no
        row", so those rows' drawings are kept across moves."""
        if self.cursor_type == "row" and hasattr(self, "_row_locations"):
            row = self._row_locations.get(row_key)  # None: the header
            if cursor_location.row != row:
                cursor_location = AWAY
            if hover_location.row != row:
                hover_location = AWAY
        return super()._render_line_in_row(
            row_key, line_no, base_style, cursor_location, hover_location
        )

    def _render_cell(
        self,
        row_index: int,
        column_index: int,
        base_style: Style,
        width: int,
        cursor: bool = False,
        hover: bool = False,
    ) -> list[list[Segment]]:
        """A body cell's one line, drawn directly from its text.

        A cell here is plain text already cut to its column's width, so what DataTable's
        general drawing (padding, wrapping, styling through rich's renderer) gives is one
        segment of that text in the row's style: drawing the visible cells that way took
        most of a re-sort's or a page's time at 2,000 rows. Headers and any other cell
        are drawn by DataTable; tests compare both ways on every kind of row."""
        text = self._plain_cell(row_index, column_index, width)
        if text is None:
            return super()._render_cell(row_index, column_index, base_style, width, cursor, hover)
        fixed = row_index < self.fixed_rows or column_index < self.fixed_columns
        component_style, post_style = self._get_styles_to_render_cell(
            False,
            False,
            fixed,
            hover,
            cursor,
            self.show_cursor,
            self._show_hover_cursor,
            self.cursor_foreground_priority == "css",
            self.cursor_background_priority == "css",
        )
        meta = Style.from_meta({"row": row_index, "column": column_index})
        return [[Segment(text, base_style + meta + component_style + post_style)]]

    def _plain_cell(self, row_index: int, column_index: int, width: int) -> str | None:
        """The text of a body cell that can be drawn directly (None: let DataTable)."""
        if row_index < 0 or column_index < 0 or self.cell_padding:
            return None
        try:
            row_key = self._row_locations.get_key(row_index)
            column_key = self._column_locations.get_key(column_index)
            if self.rows[row_key].height != 1:
                return None
            value = self._data[row_key][column_key]
        except (AttributeError, KeyError):  # another Textual: its own drawing
            return None
        text = value.text if isinstance(value, LeadCell) else value
        if not isinstance(text, CellText) or text.spans or text.style:
            return None
        plain = text.plain
        return plain if cell_len(plain) == width else None

    def _add_all(self, rows: list[tuple[str, Kept]]) -> None:
        """Add rows to the emptied table at once.

        DataTable's ``add_row`` does per-row work this table never needs (it lists the
        columns twice, sets the cursor, and queues the row for measuring its cells,
        although every column here has a fixed width and every row one line): adding
        2,000 rows took about a second. So the rows go into the table's own structures
        in one step, as ``add_row`` leaves them; where those are not there (another
        Textual), ``add_row`` does it."""
        if self.row_count or not all(
            hasattr(self, name)
            for name in (
                "_data",
                "_row_locations",
                "_update_count",
                "_new_rows",
                "_update_dimensions",
            )
        ):
            for key, kept in rows:
                self.add_row(*kept.cells, key=key)
            return
        keys = [column.key for column in self.ordered_columns]
        places = {}
        for index, (key, kept) in enumerate(rows):
            if kept.entries is None:  # made once; a refill puts the same entries back
                row_key = RowKey(key)
                data = dict(zip(keys, kept.cells, strict=True))
                kept.entries = (row_key, data, TableRow(row_key, 1))
            row_key, data, row = kept.entries
            places[row_key] = index
            self._data[row_key] = data
            self.rows[row_key] = row
        self._row_locations = type(self._row_locations)(places)  # DataTable's two-way map
        if self.styles.auto_dimensions:  # sized by its rows: the scroll waits for the size
            self._require_update_dimensions = True
        else:
            # A fixed size: the scrollable height at once (DataTable finds it when idle,
            # after a frame, and only then scrolls to the cursor: two more frames after a
            # filter is cleared).
            self._new_rows.clear()
            self._update_dimensions(())
            self._require_update_dimensions = False
        self._update_count += 1
        self.cursor_coordinate = self.cursor_coordinate  # clamped, as add_row does
        if rows and self.show_cursor:
            self._highlight_cursor()  # add_row does so when the first row arrives
        self.check_idle()

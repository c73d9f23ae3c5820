"""Scan progress: rich's display on a terminal, nothing at all otherwise."""

import io
import sys

from tui.cli.progress import Progress


class Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_a_terminal_sees_count_rate_time_and_column():
    screen = Terminal()
    bar = Progress(3, enabled=True, file=screen)
    for name in ("age_years", "bmi", "a_very_long_column_name_that_goes_on_and_on"):
        bar.step(name)
    bar.close()
    shown = screen.getvalue()
    assert "scanning" in shown and "3/3" in shown
    assert "/s" in shown and "left" in shown and "0:00:0" in shown  # rate, elapsed, left
    assert "a_very_long_column_name_" in shown and "goes_on_and_on" not in shown
    assert bar.done == 3


def test_not_a_terminal_gets_nothing_and_rich_is_not_loaded(capsys):
    before = "rich.progress" in sys.modules
    bar = Progress(5, enabled=False)
    for i in range(5):
        bar.step(f"c{i}")
    bar.close()
    assert capsys.readouterr().err == ""
    assert bar.done == 5
    assert ("rich.progress" in sys.modules) == before


def test_nothing_to_scan_draws_nothing():
    screen = Terminal()
    bar = Progress(0, enabled=True, file=screen)
    bar.close()
    assert screen.getvalue() == ""

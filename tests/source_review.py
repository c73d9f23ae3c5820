"""The review app opened on a source, driven by Pilot, against the same data as a file."""

from __future__ import annotations

import asyncio
from pathlib import Path

import pytest
from app_fleet import settle

from tui import recodings
from tui.app.app import ReviewApp
from tui.app.fit_cache import FitCache, FitRequest
from tui.app.screens.inspect import InspectScreen
from tui.app.session import open_session
from tui.app.source_session import open_source_session
from tui.app.widgets.triage_table import TriageTable
from tui.engine.reduced_data import reduce_data
from tui.intake.sources import Source

COLUMN = "crp_mg_l"
"""A column with a planted bend and missing values."""


def review_matches_file(source: Source, outcome: str, csv: Path, folder: Path) -> None:
    """Open the review on ``source``, let it scan, open ``COLUMN`` (plot and forms table),
    accept its best form; every score, fit and decile equals the file review's."""
    try:
        data = reduce_data(source, outcome, None)
    finally:
        source.close()
    session = open_source_session(data, data.source_info(), folder / "source.recodings.json")
    file_session = open_session(csv, outcome, log_path=folder / "file.recodings.json")
    cache = FitCache(file_session.dataset, file_session.settings.max_levels)
    want = cache.fits(FitRequest(COLUMN, 4, 4))

    async def go() -> None:
        app = ReviewApp(session)
        async with app.run_test(size=(120, 40)) as pilot:
            for _ in range(600):
                await pilot.pause(0.05)
                if session.scan_finished and all(s.forms_fitted for s in session.ranked):
                    break
            await settle(pilot)
            assert data.label in str(app.screen.query_one("#title").render())
            table = pilot.app.screen.query_one(TriageTable)
            table.move_to_key(COLUMN)
            await pilot.press("enter")
            await settle(pilot)
            screen = pilot.app.screen
            assert isinstance(screen, InspectScreen)
            for _ in range(200):
                if screen.fits is not None:
                    break
                await pilot.pause(0.05)
            got = screen.fits
            assert [r.label for r in got.table.rows] == [r.label for r in want.table.rows]
            for a, b in zip(got.table.rows, want.table.rows, strict=True):
                assert a.aic == pytest.approx(b.aic, rel=1e-9, abs=1e-9), a.label
            assert [g.n for g in got.groups] == [g.n for g in want.groups]
            best = min(got.table.rows, key=lambda r: r.aic if r.recoding else 1e300)
            session.accept(COLUMN, best, 4, 4)

    asyncio.run(go())
    ranked = {s.column: s for s in session.ranked}
    file_scans = {s.column: s for s in _file_scans(file_session)}
    for name, scan in file_scans.items():
        assert ranked[name].score == pytest.approx(scan.score, rel=1e-9, abs=1e-9), name
    log = recodings.load(session.log_path)
    decision = log.decision_for(COLUMN)
    assert decision.deciles == pytest.approx(_deciles(file_session), rel=1e-12)
    assert log.source.engine is not None and log.source.engine.rows == data.rows
    session.book.close()
    file_session.book.close()


def _file_scans(session):
    from tui.engine.runner import scan_columns

    data = session.dataset
    return list(scan_columns(session.columns, data.raw_values, data.outcome.y, workers=1))


def _deciles(session):
    from tui.engine.drift import training_deciles

    return training_deciles(session.dataset.values(COLUMN))

"""Who decided what: ``decided_by`` beside ``decided_at``, the bendwise version in the
evidence, shown on the log screen; logs without them load and save as before."""

import asyncio
import json
from dataclasses import replace

from app_fleet import OUTCOME, quick_scanner, settle, write_fleet
from recodings_cases import every_kind_log

from tui import __version__, recodings
from tui.app.app import ReviewApp
from tui.app.fit_cache import FitCache, FitRequest
from tui.app.session import open_session
from tui.app.widgets.line import Line
from tui.cli import main as cli
from tui.recodings.diff import diff_logs
from tui.recodings.lock import login_name

LOG = "fleet.recodings.json"


def _accept_route(session):
    fits = FitCache(session.dataset, session.settings.max_levels).fits(FitRequest("route_km", 4, 4))
    return session.accept("route_km", fits.table.row("quadratic"), 4, 4)


def test_a_decision_records_the_login_name_and_the_version(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    write_fleet(tmp_path)
    session = open_session("fleet.csv", OUTCOME, log_path=LOG)
    _accept_route(session)
    session.set_aside("depot_code")
    entry = json.loads((tmp_path / LOG).read_text())
    assert entry["recodings"][0]["decided_by"] == login_name()
    assert entry["recodings"][0]["evidence"]["bendwise_version"] == __version__
    assert entry["set_aside"][0]["decided_by"] == login_name()
    session.book.close()


def test_analyst_option_overrides_the_login_name(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    write_fleet(tmp_path)
    seen = {}
    monkeypatch.setattr(
        ReviewApp, "run", lambda app: seen.setdefault("who", app.session.book.analyst)
    )
    argv = ["review", "fleet.csv", "--outcome", OUTCOME, "--log", LOG, "--analyst", "r.ortiz"]
    assert cli.main(argv) == 0
    assert seen["who"] == "r.ortiz"


def test_logs_without_the_keys_load_and_save_as_before(tmp_path):
    old = every_kind_log()
    old = replace(
        old,
        decisions=tuple(replace(d, decided_by=None) for d in old.decisions),
        set_aside=tuple(replace(s, decided_by=None) for s in old.set_aside),
    )
    text = recodings.dumps(old)
    assert "decided_by" not in text
    document = json.loads(text)
    for entry in document["recodings"]:
        entry["evidence"].pop("bendwise_version", None)
    earlier = json.dumps(document, indent=2)  # as an earlier version wrote it
    loaded = recodings.loads(earlier)
    assert all(d.decided_by is None and d.evidence.version is None for d in loaded.decisions)
    assert "bendwise_version" not in recodings.dumps(loaded)


def test_diff_ignores_who_decided():
    log = every_kind_log()
    other = replace(log, decisions=tuple(replace(d, decided_by="b.lee") for d in log.decisions))
    assert diff_logs(log, other).equal


def test_the_log_screen_names_who_and_which_version(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    write_fleet(tmp_path)
    first = open_session("fleet.csv", OUTCOME, log_path=LOG, analyst="analyst-7")
    _accept_route(first)
    first.book.close()
    session = open_session("fleet.csv", OUTCOME, log_path=LOG)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=(160, 30)) as pilot:
            await settle(pilot)
            await pilot.press("L")
            await pilot.pause()
            detail = str(app.screen.query_one("#detail", Line).render())
            assert "by analyst-7" in detail and f"bendwise {__version__}" in detail

    asyncio.run(go())

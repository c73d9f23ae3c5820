"""One writer per recoding log: the lock beside the log, read-only reviews, stale locks."""

import asyncio
import json
import multiprocessing
import os
import socket
import subprocess
import sys
from pathlib import Path

import pytest
from app_fleet import OUTCOME, quick_scanner, settle, write_fleet
from test_app_flows import open_column

from tui.app.app import ReviewApp
from tui.app.session import open_session
from tui.cli import main as cli
from tui.recodings.decisions import ReadOnlyLog
from tui.recodings.lock import LogLocked, acquire, lock_path, login_name, read_holder

LOG = "fleet.recodings.json"


@pytest.fixture
def folder(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    write_fleet(tmp_path)
    return tmp_path


@pytest.fixture
def live_pid():
    """A process of this host that stays alive for the test (not this one)."""
    child = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(600)"])
    yield child.pid
    child.kill()
    child.wait()


def _gone_pid() -> int:
    child = subprocess.Popen([sys.executable, "-c", "pass"])
    child.wait()  # reaped: no process has this id now (reuse within the test is unlikely)
    return child.pid


def _write_lock(log: Path, host: str, pid: int, user: str = "ana") -> None:
    holder = {"host": host, "pid": pid, "user": user, "since": "2026-03-02T09:15:00+00:00"}
    lock_path(log).write_text(json.dumps(holder) + "\n")


def test_lock_holds_host_pid_and_user_and_goes_on_release(tmp_path):
    log = tmp_path / "a.json"
    lock, notice = acquire(log)
    assert notice is None
    document = json.loads(lock_path(log).read_text())
    assert document["host"] == socket.gethostname()
    assert document["pid"] == os.getpid()
    assert document["user"] == login_name()
    lock.release()
    assert not lock_path(log).exists()


def test_live_holder_on_this_host_is_named_and_refused(tmp_path, live_pid):
    log = tmp_path / "a.json"
    _write_lock(log, socket.gethostname(), live_pid)
    with pytest.raises(LogLocked) as refused:
        acquire(log, take_over=True)  # a live process here is never taken over
    text = str(refused.value)
    assert f"ana on {socket.gethostname()} (process {live_pid}" in text
    assert "--read-only" in text
    assert read_holder(lock_path(log)).pid == live_pid  # untouched


def test_stale_lock_on_this_host_is_reported_and_taken_over(tmp_path):
    log = tmp_path / "a.json"
    gone = _gone_pid()
    _write_lock(log, socket.gethostname(), gone)
    lock, notice = acquire(log)
    assert f"process {gone}" in notice and "its process is gone" in notice
    assert read_holder(lock_path(log)) == lock.holder
    lock.release()


def test_another_hosts_lock_needs_take_over(tmp_path):
    log = tmp_path / "a.json"
    _write_lock(log, "other-host.example", 4121)
    with pytest.raises(LogLocked, match="--take-over"):
        acquire(log)
    lock, notice = acquire(log, take_over=True)
    assert "ana on other-host.example" in notice and "--take-over" in notice
    lock.release()


def test_release_keeps_a_lock_taken_over_by_another_review(tmp_path):
    log = tmp_path / "a.json"
    lock, _ = acquire(log)
    _write_lock(log, "other-host.example", 4121)  # taken over with --take-over elsewhere
    lock.release()
    assert read_holder(lock_path(log)).host == "other-host.example"


def test_unreadable_lock_needs_take_over(tmp_path):
    log = tmp_path / "a.json"
    lock_path(log).write_text("half a lo")
    with pytest.raises(LogLocked, match="unreadable lock file"):
        acquire(log)
    lock, notice = acquire(log, take_over=True)
    assert "unreadable" in notice
    lock.release()


def _contend(log: str, results, ready, done) -> None:
    ready.wait()
    try:
        acquire(log)
        results.put("held")
    except LogLocked:
        results.put("refused")
    done.wait()  # keep the process (and so the lock) alive until every one has tried


def test_of_many_reviews_starting_at_once_exactly_one_gets_the_lock(tmp_path):
    context = multiprocessing.get_context("fork")
    results, ready, done = context.Queue(), context.Event(), context.Event()
    log = str(tmp_path / "a.json")
    workers = [context.Process(target=_contend, args=(log, results, ready, done)) for _ in range(6)]
    for worker in workers:
        worker.start()
    ready.set()
    outcomes = sorted(results.get(timeout=60) for _ in workers)
    done.set()
    for worker in workers:
        worker.join(timeout=60)
    assert outcomes == ["held"] + ["refused"] * 5


# --- the review command and the app ----------------------------------------------------------


def test_review_on_a_locked_log_exits_naming_the_holder(folder, live_pid, capsys):
    _write_lock(folder / LOG, socket.gethostname(), live_pid)
    assert cli.main(["review", "fleet.csv", "--outcome", OUTCOME, "--log", LOG]) == 2
    line = capsys.readouterr().err.strip()
    assert "\n" not in line and f"process {live_pid}" in line and "--read-only" in line
    assert not (folder / LOG).exists()


def test_review_takes_the_lock_and_removes_it_on_exit(folder, monkeypatch):
    seen = {}

    def run(app):
        seen["lock"] = read_holder(lock_path(folder / LOG))

    monkeypatch.setattr(ReviewApp, "run", run)
    assert cli.main(["review", "fleet.csv", "--outcome", OUTCOME, "--log", LOG]) == 0
    assert seen["lock"].pid == os.getpid()
    assert not lock_path(folder / LOG).exists()


def test_read_only_review_records_nothing_and_takes_no_lock(folder, live_pid):
    _write_lock(folder / LOG, socket.gethostname(), live_pid)
    session = open_session("fleet.csv", OUTCOME, log_path=LOG, read_only=True)
    assert "held by ana" in session.access_notice
    assert read_holder(lock_path(folder / LOG)).pid == live_pid
    with pytest.raises(ReadOnlyLog):
        session.set_aside("stops", "")
    assert not (folder / LOG).exists()


def test_read_only_app_refuses_decision_keys_with_a_notice(folder):
    session = open_session("fleet.csv", OUTCOME, log_path=LOG, read_only=True)

    async def go() -> None:
        app = ReviewApp(session, quick_scanner)
        async with app.run_test(size=(100, 30)) as pilot:
            await settle(pilot)
            title = str(app.screen.query_one("#title").render())
            assert "READ-ONLY" in title
            screen = await open_column(pilot, "route_km")
            for key in ("l", "x"):
                await pilot.press(key)
                await pilot.pause()
                assert app.screen is screen  # nothing recorded, no recorded-rows screen
            notices = [n.message for n in app._notifications]
            assert any("read-only review" in m and "nothing recorded" in m for m in notices)
            assert not (folder / LOG).exists()

    asyncio.run(go())


def test_a_second_session_of_this_process_takes_the_lock_without_a_notice(tmp_path):
    log = tmp_path / "a.json"
    first, _ = acquire(log)
    second, notice = acquire(log)
    assert notice is None and read_holder(lock_path(log)) == second.holder
    first.release()  # no longer its lock: left in place
    assert lock_path(log).exists()
    second.release()
    assert not lock_path(log).exists()


@pytest.mark.parametrize("signame", ["SIGHUP", "SIGTERM"])
def test_a_review_whose_terminal_hangs_up_leaves_no_lock(folder, signame):
    # A dropped SSH connection sends SIGHUP; its default action would end the review at
    # once with the lock left behind. The review runs for real here, in a pseudo-terminal.
    import pty
    import signal
    import time

    leader, follower = pty.openpty()
    env = {**os.environ, "PYTHONPATH": str(Path(__file__).resolve().parents[1])}
    args = [sys.executable, "-m", "tui", "review", "fleet.csv", "--outcome", OUTCOME]
    child = subprocess.Popen(
        [*args, "--log", LOG], stdin=follower, stdout=follower, stderr=follower, env=env
    )
    os.close(follower)
    try:
        lock = lock_path(folder / LOG)
        deadline = time.monotonic() + 60
        while not lock.exists() and child.poll() is None and time.monotonic() < deadline:
            time.sleep(0.1)
        assert lock.exists(), "the review never took the lock"
        assert read_holder(lock).pid == child.pid
        child.send_signal(getattr(signal, signame))
        assert child.wait(timeout=30) == 128 + getattr(signal, signame)
        assert not lock.exists()
    finally:
        if child.poll() is None:
            child.kill()
            child.wait()
        os.close(leader)

"""A two-pass scan gives a one-pass scan's results, scores first; a column can jump the
second pass's queue."""

import functools
import json
import multiprocessing
import subprocess
import sys
import threading
import time
from pathlib import Path

import numpy as np
import pytest

from tui.engine.runner import scan_columns
from tui.engine.scan import rank
from tui.engine.shape import THRESHOLD
from tui.engine.two_pass import TwoPassScan


def _data(rng, n=3000, p=8):
    cols = {f"c{j}": rng.normal(size=n) for j in range(p)}
    cols["c7"] = np.ones(n)  # constant: listed, never scored
    eta = -1 + 0.8 * cols["c0"] ** 2 + 0.6 * (cols["c1"] > 0.5)
    y = (rng.random(n) < 1 / (1 + np.exp(-eta))).astype(np.int8)
    return cols, y


def _check(steps, one, names):
    first = [s for s in steps if s.stage == "score"]
    second = [s for s in steps if s.stage == "forms"]
    assert [s.stage for s in steps] == ["score"] * len(names) + ["forms"] * len(names)
    assert [s.done for s in first] == list(range(1, len(names) + 1))
    assert {s.scan.column: s.scan for s in second} == one
    for s in first:
        full = one[s.scan.column]
        assert s.scan.score == full.score and s.scan.p_value == full.p_value
        assert s.scan.flags == full.flags
        assert s.scan.shape == full.shape or full.shape == THRESHOLD
        assert s.scan.best_form is None and s.scan.forms_fitted is (full.score is None)


def test_two_passes_equal_one_pass_in_process_and_on_workers(rng):
    cols, y = _data(rng)
    names = list(cols)
    one = {s.column: s for s in scan_columns(names, cols.__getitem__, y, workers=1)}
    for workers in (1, 2):
        steps = list(TwoPassScan(names, cols.__getitem__, y, workers=workers))
        _check(steps, one, names)


def test_two_passes_from_a_fork_server_when_threads_run(rng):
    cols, y = _data(rng)
    names = list(cols)
    one = {s.column: s for s in scan_columns(names, cols.__getitem__, y, workers=1)}
    out = []
    worker = threading.Thread(
        target=lambda: out.extend(TwoPassScan(names, cols.__getitem__, y, workers=2))
    )
    worker.start()
    worker.join()
    _check(out, one, names)


def test_second_pass_follows_the_ranking_and_a_column_can_jump_it(rng):
    cols, y = _data(rng)
    names = list(cols)
    scan = TwoPassScan(names, cols.__getitem__, y, workers=1)
    steps = iter(scan)
    first = [next(steps) for _ in names]
    order = [s.column for s in rank(s.scan for s in first)]
    assert scan.prioritise(order[-1])  # the least non-linear column goes first
    assert not scan.prioritise("no such column")
    second = [s.scan.column for s in steps]
    assert second == [order[-1], *order[:-1]]


def test_a_column_asked_for_during_the_first_pass_comes_first(rng):
    cols, y = _data(rng)
    names = list(cols)
    scan = TwoPassScan(names, cols.__getitem__, y, workers=1)
    steps = iter(scan)
    next(steps)
    assert scan.prioritise("c5")
    rest = list(steps)
    assert [s.scan.column for s in rest if s.stage == "forms"][0] == "c5"


def test_first_pass_in_the_calling_thread_gives_the_same_steps(rng):
    # As the review app runs it: the first pass in its scan thread (threads run, so the
    # second pass's workers come from a fork server), the second on two workers.
    cols, y = _data(rng)
    names = list(cols)
    one = {s.column: s for s in scan_columns(names, cols.__getitem__, y, workers=1)}
    out = []
    scan = TwoPassScan(names, cols.__getitem__, y, workers=2, first_here=True)

    def run() -> None:
        steps = iter(scan)
        out.extend(next(steps) for _ in names)
        assert scan.prioritise("c5")  # asked for as the first pass ends: fitted first
        out.extend(steps)

    worker = threading.Thread(target=run)
    worker.start()
    worker.join()
    _check(out, one, names)
    # c5 goes to a worker first; results come as they finish, so with two workers another
    # column may finish just before it (the one-process tests above check the order itself).
    assert "c5" in [s.scan.column for s in out if s.stage == "forms"][:2]


def test_a_scan_closed_in_its_first_pass_leaves_no_worker_behind(rng):
    cols, y = _data(rng)
    before = {p.pid for p in multiprocessing.active_children()}
    steps = iter(TwoPassScan(list(cols), cols.__getitem__, y, workers=2, first_here=True))
    assert next(steps).stage == "score"
    steps.close()
    deadline = time.monotonic() + 20
    while {p.pid for p in multiprocessing.active_children()} - before:
        assert time.monotonic() < deadline, "worker processes still running"
        time.sleep(0.1)


def test_forked_workers_reading_batches_of_columns_give_the_same_results(rng, tmp_path):
    # Results equal a one-pass scan whichever way the workers start (fork server when other
    # threads run, as after the Spark tests); the batched reads are checked in a fresh
    # single-threaded interpreter below, where the workers are forked.
    cols, y = _data(rng, p=40)
    names = list(cols)
    one = {s.column: s for s in scan_columns(names, cols.__getitem__, y, workers=1)}
    many_of = functools.partial(_many_of, cols, tmp_path)
    steps = list(TwoPassScan(names, cols.__getitem__, y, workers=2, many_of=many_of))
    _check(steps, one, names)


def _many_of(cols, folder, batch):
    (folder / f"read_{'_'.join(batch)}").touch()  # workers are processes: a file each
    return [cols[name].copy() for name in batch]


_BATCHES = """
import functools, json, sys
from pathlib import Path
import numpy as np
sys.path.insert(0, {tests!r})
from test_two_pass import _data, _many_of
from tui.engine.runner import scan_columns
from tui.engine.two_pass import TwoPassScan
cols, y = _data(np.random.default_rng(3), p=40)
names, folder = list(cols), Path({folder!r})
one = {{s.column: s for s in scan_columns(names, cols.__getitem__, y, workers=1)}}
steps = list(TwoPassScan(names, cols.__getitem__, y, workers=2,
                         many_of=functools.partial(_many_of, cols, folder)))
same = all(s.scan == one[s.scan.column] for s in steps if s.stage == "forms")
batches = [p.name.split("_")[1:] for p in folder.glob("read_*")]
print(json.dumps({{"same": same, "batches": batches}}))
"""


def test_forked_workers_read_each_batch_of_five_columns_in_one_call(tmp_path):
    if "fork" not in multiprocessing.get_all_start_methods():
        pytest.skip("this platform cannot fork worker processes")
    code = _BATCHES.format(tests=str(Path(__file__).parent), folder=str(tmp_path))
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    got = json.loads(out.stdout.strip().splitlines()[-1])
    assert got["same"]
    batches = got["batches"]
    assert sorted(c for b in batches for c in b) == sorted(f"c{j}" for j in range(40))
    assert len(batches) == 8 and all(len(b) == 5 for b in batches)

"""Every command with hostile files and options: one line on stderr naming the problem, exit
2, nothing written and nothing changed (each file's bytes and modification time, and the
folder listing, are compared before and after).

The commands run in this process (``tui.cli.main``), so a traceback would fail the test as
an uncaught exception, and a full disk can be simulated by making the system calls fail.
"""

import errno
import hashlib
import os
import shutil
from pathlib import Path

import pytest
from conftest import GOLDEN, SAMPLE

from tui.cli import main as cli
from tui.intake.readers import drop_cached_table

OUTCOME = "wound_infection_30d"
SMALL = "x,y,w_neg,w_nan,w_zero,w_text,site,flat\n" + "".join(
    f"{i},{i % 2},{-1 if i == 3 else 1},{'' if i == 4 else 1},0,t{i},s{i},5\n" for i in range(40)
)


def _files(place: Path) -> None:
    """The inputs of every case, good and bad, in one folder."""
    shutil.copy(SAMPLE / "surgical_cohort.csv", place / "cohort.csv")
    shutil.copy(GOLDEN / "every_kind.recodings.json", place / "log.json")
    (place / "small.csv").write_text(SMALL)
    (place / "empty.csv").write_bytes(b"")
    (place / "header.csv").write_text("x,y\n")
    (place / "dupes.csv").write_text("x,x,y\n1,2,0\n3,4,1\n")
    (place / "blank.csv").write_text("x,,y\n1,2,0\n3,4,1\n")
    (place / "spaces.csv").write_text("x,   ,y\n1,2,0\n3,4,1\n")
    (place / "long.csv").write_text("x," + "n" * 100_000 + ",y\n1,2,0\n3,4,1\n")
    (place / "three.csv").write_text("x,y\n1,0\n2,1\n3,2\n4,0\n")
    (place / "text.csv").write_text("name,city,y\na,b,0\nc,d,1\ne,f,0\n")
    (place / "empty.json").write_bytes(b"")
    with open(place / "big.json", "wb") as handle:  # 100 MB without writing 100 MB
        handle.truncate(100 << 20)
    (place / "folder.json").mkdir()
    (place / "exists.json").write_text("{}\n")
    (place / "exists.md").write_text("old report\n")
    (place / "exists.csv").write_text("old table\n")
    (place / "link.json").symlink_to(place / "cohort.csv")
    (place / "link.md").symlink_to(place / "cohort.csv")
    (place / "link.csv").symlink_to(place / "cohort.csv")
    (place / "loglink.csv").symlink_to(place / "log.json")
    (place / "datalink.json").symlink_to(place / "cohort.csv")


def _state(place: Path) -> dict[str, tuple]:
    """Every entry under ``place``: kind, size, modification time and (small files) hash."""
    state = {}
    for path in sorted(place.rglob("*")):
        info = path.lstat()
        entry: tuple = (path.is_symlink(), path.is_dir(), info.st_size, info.st_mtime_ns)
        if path.is_file() and not path.is_symlink() and info.st_size < 1 << 20:
            entry += (hashlib.sha256(path.read_bytes()).hexdigest(),)
        state[str(path.relative_to(place))] = entry
    return state


SCAN = ["scan", "cohort.csv", "--outcome", OUTCOME]
SCAN_SMALL = ["scan", "small.csv", "--outcome", "y"]
REPORT = ["report", "log.json", "--data", "cohort.csv"]
REPLAY = ["replay", "log.json", "cohort.csv"]
REVIEW_SMALL = ["review", "small.csv", "--outcome", "y", "--log", "new.json"]

# (case, argv, words the one line must hold)
CASES = [
    # data files
    ("empty file", ["scan", "empty.csv", "--outcome", "y"], ["empty.csv", "empty"]),
    ("header only", ["scan", "header.csv", "--outcome", "y"], ["'y'", "no non-missing"]),
    ("repeated names", ["scan", "dupes.csv", "--outcome", "y"], ["more than once", "'x'"]),
    ("empty name", ["scan", "blank.csv", "--outcome", "y"], ["column 2", "empty name"]),
    ("name of spaces", ["scan", "spaces.csv", "--outcome", "y"], ["column 2", "empty name"]),
    ("100,000-character name", ["scan", "long.csv", "--outcome", "y"], ["100000 characters"]),
    ("outcome of three values", ["scan", "three.csv", "--outcome", "y"], ["'y'"]),
    ("no numeric column", ["scan", "text.csv", "--outcome", "y"], ["'name' (text)", "'city'"]),
    ("data is a folder", ["scan", "folder.json", "--outcome", "y"], ["directory"]),
    ("review: empty file", ["review", "empty.csv", "--outcome", "y"], ["empty"]),
    ("review: repeated names", ["review", "dupes.csv", "--outcome", "y"], ["more than once"]),
    ("review: no numeric column", ["review", "text.csv", "--outcome", "y"], ["(text)"]),
    ("replay: empty data", ["replay", "log.json", "empty.csv", "-o", "new.csv"], ["empty"]),
    ("replay: repeated names", ["replay", "log.json", "dupes.csv", "-o", "n.csv"], ["more than"]),
    (
        "report: empty data",
        ["report", "log.json", "--data", "empty.csv", "--output", "r.md"],
        ["empty"],
    ),  # fmt: skip
    # weights and covariates
    ("weight not a column", [*SCAN_SMALL, "--weight", "nosuch"], ["weight column", "nosuch"]),
    ("negative weight", [*SCAN_SMALL, "--weight", "w_neg"], ["negative"]),
    ("missing weight", [*SCAN_SMALL, "--weight", "w_nan"], ["missing"]),
    ("zero weights", [*SCAN_SMALL, "--weight", "w_zero"], ["zero on every row"]),
    ("text weight", [*SCAN_SMALL, "--weight", "w_text"], ["not numeric"]),
    ("weight is the outcome", [*SCAN_SMALL, "--weight", "y"], ["outcome"]),
    (
        "weight kind unknown",
        [*SCAN_SMALL, "--weight", "x", "--weight-kind", "both"],
        ["weight-kind"],
    ),  # fmt: skip
    ("covariate not a column", [*SCAN_SMALL, "--adjust", "nosuch"], ["nosuch"]),
    ("covariate is the outcome", [*SCAN_SMALL, "--adjust", "y"], ["outcome"]),
    ("covariate is the weight", [*SCAN_SMALL, "--adjust", "x", "--weight", "x"], ["both"]),
    ("constant covariate", [*SCAN_SMALL, "--adjust", "flat"], ["flat", "constant"]),
    ("text covariate, many levels", [*SCAN_SMALL, "--adjust", "site"], ["site", "levels"]),
    ("review: weight not a column", [*REVIEW_SMALL, "--weight", "nosuch"], ["nosuch"]),
    ("review: constant covariate", [*REVIEW_SMALL, "--adjust", "flat"], ["constant"]),
    # logs
    ("scan --log of 100 MB", [*SCAN, "--log", "big.json", "--adjust", "bmi"], ["100 MB"]),
    ("scan --log a folder", [*SCAN, "--log", "folder.json", "--adjust", "bmi"], ["directory"]),
    (
        "review --log of 100 MB",
        ["review", "cohort.csv", "--outcome", OUTCOME, "--log", "big.json"],
        ["100 MB"],
    ),  # fmt: skip
    (
        "review --log a folder",
        ["review", "cohort.csv", "--outcome", OUTCOME, "--log", "folder.json"],
        ["not a file"],
    ),  # fmt: skip
    (
        "review --log links to the data",
        ["review", "cohort.csv", "--outcome", OUTCOME, "--log", "datalink.json"],
        ["data file"],
    ),  # fmt: skip
    ("replay: log of 100 MB", ["replay", "big.json", "cohort.csv", "-o", "n.csv"], ["100 MB"]),
    (
        "replay: log a folder",
        ["replay", "folder.json", "cohort.csv", "-o", "n.csv"],
        ["directory"],
    ),  # fmt: skip
    ("replay: empty log", ["replay", "empty.json", "cohort.csv", "-o", "n.csv"], ["empty.json"]),
    ("sql: log of 100 MB", ["sql", "big.json"], ["100 MB"]),
    ("sql: log a folder", ["sql", "folder.json"], ["directory"]),
    ("sql: empty log", ["sql", "empty.json"], ["empty.json"]),
    (
        "report: log of 100 MB",
        ["report", "big.json", "--data", "cohort.csv", "--output", "r.md"],
        ["100 MB"],
    ),  # fmt: skip
    (
        "report: log a folder",
        ["report", "folder.json", "--data", "cohort.csv", "--output", "r.md"],
        ["directory"],
    ),  # fmt: skip
    ("diff: log of 100 MB", ["diff", "log.json", "big.json"], ["100 MB"]),
    ("diff: log a folder", ["diff", "folder.json", "log.json"], ["directory"]),
    # outputs
    ("scan --output links to the data", [*SCAN, "--output", "link.json"], ["data file"]),
    (
        "scan --output links to the data, --force",
        [*SCAN, "--output", "link.json", "--force"],
        ["data file"],
    ),  # fmt: skip
    (
        "scan --output is the --log",
        [*SCAN, "--log", "log.json", "--output", "log.json"],
        ["recoding log"],
    ),  # fmt: skip
    ("scan --output exists", [*SCAN, "--output", "exists.json"], ["exists", "--force"]),
    ("scan --output folder missing", [*SCAN, "--output", "no/out.json"], ["does not exist"]),
    ("scan --output a folder", [*SCAN, "--output", "folder.json"], ["directory"]),
    (
        "report --output links to the data",
        [*REPORT, "--output", "link.md", "--force"],
        ["data file"],
    ),  # fmt: skip
    ("report --output is the log", [*REPORT, "--output", "log.json"], [".md or .html"]),
    ("report --output exists", [*REPORT, "--output", "exists.md"], ["exists", "--force"]),
    ("report --output folder missing", [*REPORT, "--output", "no/r.md"], ["does not exist"]),
    (
        "replay --output links to the data",
        [*REPLAY, "-o", "link.csv", "--force"],
        ["data file"],
    ),  # fmt: skip
    (
        "replay --output links to the log",
        [*REPLAY, "-o", "loglink.csv", "--force"],
        ["recoding log"],
    ),  # fmt: skip
    ("replay --output exists", [*REPLAY, "-o", "exists.csv"], ["exists", "--force"]),
    ("replay --output folder missing", [*REPLAY, "-o", "no/n.csv"], ["does not exist"]),
]


@pytest.fixture
def place(tmp_path, monkeypatch):
    _files(tmp_path)
    monkeypatch.chdir(tmp_path)
    drop_cached_table()

    def no_app(self):  # a case that reached the review screens has failed
        raise AssertionError("the review app started")

    from tui.app.app import ReviewApp

    monkeypatch.setattr(ReviewApp, "run", no_app)
    yield tmp_path
    drop_cached_table()


def _refused(argv, capsys) -> str:
    try:
        code = cli.main(argv)
    except SystemExit as stop:  # argparse's refusals
        code = stop.code
    out, err = capsys.readouterr()
    assert code == 2, (code, err)
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("bendwise: ")
    assert out == ""
    return lines[0]


@pytest.mark.parametrize("argv, words", [c[1:] for c in CASES], ids=[c[0] for c in CASES])
def test_hostile_input_is_refused_in_one_line(place, capsys, argv, words):
    before = _state(place)
    line = _refused(argv, capsys)
    for word in words:
        assert word in line, line
    assert len(line) < 500, line  # a 100,000-character name is cut, not repeated
    assert _state(place) == before


# --- the system refuses the write ----------------------------------------------------------

WRITERS = {
    "scan": [*SCAN_SMALL, "--output", "out.json"],
    "report": [*REPORT, "--output", "out.md"],
    "replay": [*REPLAY, "-o", "out.csv"],
}


def _full_disk(monkeypatch):
    def fsync(fd):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(os, "fsync", fsync)
    return os.strerror(errno.ENOSPC)


def _no_permission(monkeypatch):
    import tempfile

    def mkstemp(*args, **kwargs):
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))

    monkeypatch.setattr(tempfile, "mkstemp", mkstemp)
    return os.strerror(errno.EACCES)


def _folder_not_writable(monkeypatch):
    real = os.access
    monkeypatch.setattr(
        os, "access", lambda p, mode, **kw: False if mode & os.W_OK else real(p, mode)
    )
    return "is not writable"


@pytest.mark.parametrize("command", sorted(WRITERS))
@pytest.mark.parametrize("fault", [_full_disk, _no_permission, _folder_not_writable])
def test_refused_writes_are_one_line(place, capsys, monkeypatch, command, fault):
    before = _state(place)
    words = fault(monkeypatch)
    line = _refused(WRITERS[command], capsys)
    target = WRITERS[command][-1]
    assert line.startswith(f"bendwise: cannot write {target}: "), line
    assert words in line, line
    assert _state(place) == before


def test_real_chmod_folder_not_writable(place, capsys):
    """Without the simulated check: a folder the process may truly not write."""
    if os.geteuid() == 0:
        pytest.skip("root may write any folder")
    locked = place / "locked"
    locked.mkdir()
    locked.chmod(0o555)
    try:
        line = _refused([*SCAN_SMALL, "--output", "locked/out.json"], capsys)
    finally:
        locked.chmod(0o755)
    assert "is not writable" in line


def test_force_replaces_an_output_but_keeps_inputs(place, capsys):
    before = (place / "cohort.csv").read_bytes()
    assert cli.main([*SCAN_SMALL, "--output", "exists.json", "--force", "--format", "json"]) == 0
    assert (place / "exists.json").read_text().startswith("[")
    assert (place / "cohort.csv").read_bytes() == before

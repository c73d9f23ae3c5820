"""``bendwise review`` refuses bad input with one line and exit 2, before any screen opens."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest
from app_fleet import OUTCOME, WEIGHT, write_fleet, write_weighted_fleet

from tui.app.session import default_log_path, open_session
from tui.cli.main import main


@pytest.fixture
def folder(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    monkeypatch.chdir(tmp_path)
    write_fleet(tmp_path)
    return tmp_path


def refused(capsys: pytest.CaptureFixture[str], *args: str) -> str:
    """Run the command; it must fail with exit 2 and exactly one line on stderr."""
    assert main(["review", *args]) == 2
    err = capsys.readouterr().err
    assert err.startswith("bendwise: ") and err.count("\n") == 1, err
    assert "Traceback" not in err
    return err


def test_review_is_a_command() -> None:
    out = subprocess.run(
        [sys.executable, "-m", "tui", "review", "--help"], capture_output=True, text=True
    )
    assert out.returncode == 0
    options = ("--outcome", "--event", "--exclude", "--log", "--groups", "--knots")
    for option in (*options, "--adjust", "--weight", "--weight-kind"):
        assert option in out.stdout


def test_missing_data_file(folder: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert "nowhere.csv" in refused(capsys, "nowhere.csv", "--outcome", OUTCOME)


def test_unknown_outcome(folder: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert "late_deliveries" in refused(capsys, "fleet.csv", "--outcome", "late_deliveries")


@pytest.mark.parametrize(
    ("options", "named"),
    [
        (["--adjust", "stops,regoin"], "'regoin' (closest: region)"),
        (["--adjust", OUTCOME], "outcome"),
        (["--weight", "copys"], "weight column not found: 'copys'"),
        (["--weight", "depot_temp_c"], "negative"),
        (["--weight", WEIGHT, "--adjust", WEIGHT], "both a weight and an adjustment"),
    ],
)
def test_bad_adjustment_or_weight(
    folder: Path, capsys: pytest.CaptureFixture[str], options: list[str], named: str
) -> None:
    write_weighted_fleet(folder)
    err = refused(capsys, "fleet_w.csv", "--outcome", OUTCOME, *options)
    assert named in err
    assert not (folder / "fleet_w.recodings.json").exists()


def test_unknown_weight_kind(folder: Path, capsys: pytest.CaptureFixture[str]) -> None:
    write_weighted_fleet(folder)
    with pytest.raises(SystemExit) as stop:  # refused while the options are read
        main(
            [
                "review",
                "fleet_w.csv",
                "--outcome",
                OUTCOME,
                "--weight",
                WEIGHT,
                "--weight-kind",
                "x",
            ]
        )
    assert stop.value.code == 2
    err = capsys.readouterr().err
    assert err.startswith("bendwise: ") and err.count("\n") == 1 and "--weight-kind" in err


def test_log_for_another_outcome(folder: Path, capsys: pytest.CaptureFixture[str]) -> None:
    session = open_session("fleet.csv", OUTCOME)
    session.set_aside("depot_code")  # writes the log
    renamed = (folder / "fleet.csv").read_text().replace(OUTCOME, "late_flag", 1)
    (folder / "other.csv").write_text(renamed)
    err = refused(capsys, "other.csv", "--outcome", "late_flag", "--log", "fleet.recodings.json")
    assert f"outcome '{OUTCOME}'" in err


def test_damaged_log(folder: Path, capsys: pytest.CaptureFixture[str]) -> None:
    (folder / "bad.json").write_text('{"format": "bendwise-recodings", "format_version": 1')
    assert "bad.json" in refused(capsys, "fleet.csv", "--outcome", OUTCOME, "--log", "bad.json")
    assert (folder / "bad.json").read_text().endswith("1")  # left as it was


def test_log_cannot_be_the_data(folder: Path, capsys: pytest.CaptureFixture[str]) -> None:
    before = (folder / "fleet.csv").read_bytes()
    err = refused(capsys, "fleet.csv", "--outcome", OUTCOME, "--log", "fleet.csv")
    assert "data file" in err
    assert (folder / "fleet.csv").read_bytes() == before


def test_log_folder_must_exist(folder: Path, capsys: pytest.CaptureFixture[str]) -> None:
    err = refused(capsys, "fleet.csv", "--outcome", OUTCOME, "--log", "no/such/x.json")
    assert "does not exist" in err


def test_log_defaults_to_the_data_stem_here(folder: Path) -> None:
    assert default_log_path(Path("/data/extracts/fleet.csv")) == Path("fleet.recodings.json")
    session = open_session(folder / "fleet.csv", OUTCOME)
    assert session.log_path == Path("fleet.recodings.json")
    assert not session.log_path.exists()  # nothing is written until a decision


def test_app_rooms_without_screens_load_no_screen_library() -> None:
    code = (
        "import sys, tui.app.session, tui.app.fit_cache, tui.app.text\n"
        "bad = [m for m in sys.modules if m.split('.')[0] in ('textual', 'rich', 'plotext')]\n"
        "print(','.join(bad))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_the_engine_never_loads_the_app() -> None:
    code = (
        "import sys, tui.engine.scan, tui.engine.compare, tui.engine.runner\n"
        "print(','.join(m for m in sys.modules if m.startswith('tui.app')))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""

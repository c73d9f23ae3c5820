"""A benchmark's run rewrites its results file and keeps the figures recorded earlier."""

import sys

import pytest

from benchmarks.results import KEPT, recorded


def test_a_run_writes_its_printout_with_date_machine_and_command(tmp_path, monkeypatch, capsys):
    target = tmp_path / "results" / "demo.md"
    monkeypatch.setattr(sys, "orig_argv", ["python", "benchmarks/demo.py", "--rows", "10"])
    with recorded("demo", target):
        print("ratio 12.5x")
    text = target.read_text(encoding="utf-8")
    assert "ratio 12.5x" in capsys.readouterr().out  # still printed
    assert "- command: `python benchmarks/demo.py --rows 10`" in text
    assert "cores" in text and "Python" in text and "- date: " in text
    assert "```text\nratio 12.5x\n```" in text


def test_the_recorded_earlier_section_survives_a_new_run(tmp_path):
    target = tmp_path / "demo.md"
    target.write_text(f"# old head\n\n## Latest run\n\nstale\n\n{KEPT}\n\nfrom 2026\n")
    with recorded("demo", target):
        print("fresh figures")
    text = target.read_text(encoding="utf-8")
    assert "stale" not in text and "fresh figures" in text
    assert text.endswith(f"{KEPT}\n\nfrom 2026\n")
    assert text.index("fresh figures") < text.index(KEPT)


def test_a_failed_run_leaves_the_file_alone(tmp_path):
    target = tmp_path / "demo.md"
    target.write_text("before\n")
    with pytest.raises(RuntimeError), recorded("demo", target):
        print("half a printout")
        raise RuntimeError("interrupted")
    assert target.read_text() == "before\n"
    assert sys.stdout is not None and "Tee" not in type(sys.stdout).__name__

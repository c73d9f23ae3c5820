"""Shared cases for the commands that take DATA from a source (forms, check, report,
review): each compares the source path with the file path of the same rows."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np

from tui.cli.main import main

FORMS_COLUMNS = ("bmi", "crp_mg_l", "emergency_admission")


def run_json(capsys, *args: str) -> object:
    """A command with ``--format json`` run in this process, parsed."""
    code = main([*args, "--format", "json"])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(captured.out)


def assert_close(got: object, want: object, tol: float = 1e-9, where: str = "") -> None:
    """The same structure, numbers equal to ``tol`` (relative or absolute)."""
    if isinstance(want, dict):
        assert isinstance(got, dict) and got.keys() == want.keys(), where
        for key in want:
            assert_close(got[key], want[key], tol, f"{where}.{key}")
    elif isinstance(want, list):
        assert isinstance(got, list) and len(got) == len(want), where
        for i, (a, b) in enumerate(zip(got, want, strict=True)):
            assert_close(a, b, tol, f"{where}[{i}]")
    elif isinstance(want, float) and isinstance(got, float):
        same = math.isclose(got, want, rel_tol=tol, abs_tol=tol) or (
            math.isnan(got) and math.isnan(want)
        )
        assert same, (where, got, want)
    else:
        assert got == want, (where, got, want)


def check_json(capsys, log: Path, data: str, *extra: str) -> list[dict]:
    """``bendwise check LOG DATA --format json``."""
    found = run_json(capsys, "check", str(log), data, *extra)
    assert isinstance(found, list)
    return found


def report_lines(path: Path) -> list[str]:
    """A Markdown report's lines, the generated-at stamp and data source lines left out."""
    skip = ("written ", "| file ", "| sha256 ", "| same ", "| source ", "| fingerprint ")
    return [
        line
        for line in path.read_text().splitlines()
        if not line.lower().startswith(skip) and "Each numeric candidate" not in line
    ]


def numbers_in(lines: list[str]) -> np.ndarray:
    """Every number written in the lines, in order (for a tolerance comparison)."""
    import re

    found = re.findall(r"-?\d+(?:\.\d+)?(?:e-?\d+)?", "\n".join(lines))
    return np.array([float(v) for v in found])

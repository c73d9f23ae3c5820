"""The code base passes ruff's lint and format checks (configured in pyproject.toml)."""

import shutil
import subprocess
import sys
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parent.parent


@pytest.mark.skipif(
    shutil.which("ruff") is None and sys.prefix == sys.base_prefix, reason="no ruff"
)
@pytest.mark.parametrize("args", [["check"], ["format", "--check"]])
def test_ruff(args):
    folders = [f for f in ("tui", "tests", "benchmarks", "sample_data") if (REPO / f).is_dir()]
    out = subprocess.run(
        [sys.executable, "-m", "ruff", *args, *folders],
        cwd=REPO,
        capture_output=True,
        text=True,
    )
    assert out.returncode == 0, out.stdout + out.stderr

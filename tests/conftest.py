"""Shared test helpers.

Golden files (``tests/golden``) are rewritten, after a deliberate change of output, by running
the tests that read them with ``BENDWISE_UPDATE_GOLDEN=1``; review the diff before committing.
"""

import os
import sys
from pathlib import Path

import numpy as np
import pytest

REPO = Path(__file__).resolve().parent.parent
SAMPLE = REPO / "sample_data"
GOLDEN = REPO / "tests" / "golden"
UPDATE_GOLDEN = os.environ.get("BENDWISE_UPDATE_GOLDEN") == "1"
"""``BENDWISE_UPDATE_GOLDEN=1``: rewrite the golden files from this run (the one switch)."""

# Deterministic terminals for app tests.
os.environ.setdefault("TEXTUAL_ANIMATIONS", "none")


@pytest.fixture
def rng() -> np.random.Generator:
    return np.random.default_rng(20261201)


def run_cli(*args: str, cwd: Path | None = None):
    """Run ``python -m tui`` in a subprocess; returns the CompletedProcess."""
    import subprocess

    return subprocess.run(
        [sys.executable, "-m", "tui", *args],
        capture_output=True,
        text=True,
        cwd=cwd,
        timeout=600,
    )


def pytest_addoption(parser: pytest.Parser) -> None:
    default = float(os.environ.get("BENDWISE_SOAK_SECONDS", "5"))
    parser.addoption(
        "--soak-seconds",
        type=float,
        default=default,
        help="how long the crash-save soak test kills savers (default 5, BENDWISE_SOAK_SECONDS)",
    )

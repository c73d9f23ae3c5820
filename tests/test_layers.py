"""The statistics rooms never load a screen library (checked in a fresh interpreter)."""

import subprocess
import sys

import pytest

SCREEN_LIBRARIES = ("textual", "rich", "plotext", "textual_plotext")
CORE_MODULES = [
    "tui.engine.scan",
    "tui.engine.compare",
    "tui.engine.runner",
    "tui.engine.forms",
    "tui.intake",
    "tui.intake.dataset",
    "tui.recodings",
]


@pytest.mark.parametrize("module", CORE_MODULES)
def test_core_room_imports_no_screen_library(module):
    code = (
        f"import sys, {module}\n"
        f"bad = [m for m in sys.modules if m.split('.')[0] in {SCREEN_LIBRARIES!r}]\n"
        "print(','.join(bad))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "", f"{module} loaded {out.stdout.strip()}"

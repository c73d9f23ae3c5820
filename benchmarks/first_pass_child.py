"""What ``bendwise scan`` does up to the end of its first pass, timed by wide_speed.py.

    python benchmarks/first_pass_child.py DATA.parquet OUTCOME REPORT

Imports only what the command imports for that (no pandas, statsmodels or scipy, which the
benchmark's own script loads), and writes the wall-clock time (``time.time()``) at which the
last first-pass result came to REPORT.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
if str(REPO) not in sys.path:  # run as a script from anywhere
    sys.path.insert(0, str(REPO))


def main(path: str, outcome: str, report: str) -> None:
    from tui.engine.two_pass import TwoPassScan
    from tui.intake.dataset import open_dataset

    data = open_dataset(path, outcome, None, [])
    values = (data.columns, data.raw_values, data.outcome.y)
    scan = iter(TwoPassScan(*values, many_of=data.raw_values_many))
    for step in scan:
        if step.stage == "score" and step.done == step.total:
            Path(report).write_text(repr(time.time()))
            break
    scan.close()  # type: ignore[attr-defined]


if __name__ == "__main__":
    main(*sys.argv[1:4])

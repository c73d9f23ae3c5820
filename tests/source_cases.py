"""Shared cases for the source tests: the file scan to compare with, and the comparison."""

from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd

from tui.cli.main import main

OUTCOME = "wound_infection_30d"


def scan_json(capsys, *args: str) -> list[dict]:
    """``bendwise scan ... --format json`` run in this process, parsed."""
    assert main(["scan", *args, "--format", "json"]) == 0, capsys.readouterr().err
    return json.loads(capsys.readouterr().out)


def assert_same_scan(got: list[dict], want: list[dict], tol: float = 1e-9) -> None:
    """The same ranking (column order) and every field equal, numbers to ``tol``."""
    assert [r["column"] for r in got] == [r["column"] for r in want]
    for a, b in zip(got, want, strict=True):
        assert a.keys() == b.keys()
        for key in a:
            x, y = a[key], b[key]
            if isinstance(x, float) and isinstance(y, float):
                assert math.isclose(x, y, rel_tol=tol, abs_tol=tol), (a["column"], key, x, y)
            else:
                assert x == y, (a["column"], key, x, y)


def binned_frame(rows: int = 12_000, seed: int = 7) -> pd.DataFrame:
    """Columns a scan bins (more than 1,000 values, 10,000 rows or more) and ones it keeps
    exact, with missing values, infinities, ties and a boolean; invented data."""
    rng = np.random.default_rng(seed)
    curved = rng.normal(size=rows)
    skewed = np.round(rng.lognormal(size=rows), 3)
    tied = np.where(rng.random(rows) < 0.3, 0.0, np.round(rng.exponential(size=rows), 4))
    tied[:80] = np.nan
    tied[80:83] = np.inf
    tied[83] = -np.inf
    whole = rng.integers(0, 4000, rows)
    flag = rng.random(rows) < 0.4
    lp = -1 + 0.6 * curved**2 + np.log1p(skewed) - 0.3 * flag
    y = (rng.random(rows) < 1 / (1 + np.exp(-lp))).astype(np.int64)
    return pd.DataFrame(
        {"y": y, "curved": curved, "skewed": skewed, "tied": tied, "whole": whole, "flag": flag}
    )

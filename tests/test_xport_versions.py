"""SAS transport files in version 5 (names up to 8 characters) and version 8 (long names).

The files are written by pyreadstat (``write_xport(..., file_format_version=5|8)``), an
outside writer of both layouts; the version bytes checked below follow SAS's published
record layouts ("Record Layout of a SAS Version 5 or 6 Data Set in SAS Transport Format"
and "The Record Layout of SAS Version 8 and 9 Transport Files").
"""

from __future__ import annotations

import builtins
import hashlib
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from conftest import run_cli

from tui.intake import list_columns, read_column, read_table
from tui.intake.readers import drop_cached_table
from tui.problems import InputProblem

pyreadstat = pytest.importorskip("pyreadstat")

# Invented: beehives checked in spring, did each colony swarm?
SHORT = pd.DataFrame(
    {
        "frames": [8.0, 10.0, 0.0, 12.0, np.nan, 9.0],
        "queen": ["new", "old", "old", None, "new", "old"],
        "swarmed": [1.0, 0.0, 0.0, 1.0, 1.0, 0.0],
    }
)
LONG = SHORT.rename(
    columns={
        "frames": "brood_frames_in_april",
        "queen": "queen_age_category",
        "swarmed": "colony_swarmed",
    }
)


def _write(frame: pd.DataFrame, path: Path, version: int) -> Path:
    pyreadstat.write_xport(frame, str(path), file_format_version=version)
    return path


def _sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _check_same(frame: pd.DataFrame, expected: pd.DataFrame) -> None:
    assert list(frame.columns) == list(expected.columns)
    numbers = [c for c in expected.columns if expected[c].dtype.kind == "f"]
    for name in numbers:
        np.testing.assert_array_equal(
            frame[name].to_numpy(dtype=float), expected[name].to_numpy(dtype=float)
        )
    text = next(c for c in expected.columns if c not in numbers)
    assert frame[text].isna().tolist() == expected[text].isna().tolist()
    assert frame[text].dropna().tolist() == expected[text].dropna().tolist()


def test_the_writer_really_makes_both_versions(tmp_path: Path) -> None:
    v5 = _write(SHORT, tmp_path / "v5.xpt", 5).read_bytes()[:80]
    v8 = _write(LONG, tmp_path / "v8.xpt", 8).read_bytes()[:80]
    assert v5.startswith(b"HEADER RECORD*******LIBRARY HEADER RECORD!!!!!!!")
    assert v8.startswith(b"HEADER RECORD*******LIBV8   HEADER RECORD!!!!!!!")
    with pytest.raises(Exception, match="too long"):  # version 5 cannot hold long names
        _write(LONG, tmp_path / "long_v5.xpt", 5)


@pytest.mark.parametrize(("version", "frame"), [(5, SHORT), (8, LONG), (8, SHORT)])
def test_both_versions_read_alike(tmp_path: Path, version: int, frame: pd.DataFrame) -> None:
    path = _write(frame, tmp_path / f"hives_v{version}.xpt", version)
    before = _sha(path)
    try:
        _check_same(read_table(path), frame)
        assert list_columns(path) == list(frame.columns)
        first = frame.columns[0]
        column = read_column(path, first)
        assert column.name == first
        np.testing.assert_array_equal(column.to_numpy(dtype=float), frame[first].to_numpy())
        picked = read_table(path, columns=[frame.columns[2], first])
        assert list(picked.columns) == [frame.columns[2], first]
    finally:
        drop_cached_table()
    assert _sha(path) == before


def test_version_8_zeros_stay_zero(tmp_path: Path) -> None:
    path = _write(
        pd.DataFrame({"dose_in_millilitres": [0.0, -0.0, 1.0, 2.5]}), tmp_path / "z.xpt", 8
    )
    assert read_table(path)["dose_in_millilitres"].tolist() == [0.0, 0.0, 1.0, 2.5]


def test_version_8_missing_column_names_the_closest(tmp_path: Path) -> None:
    path = _write(LONG, tmp_path / "hives.xpt", 8)
    with pytest.raises(InputProblem, match="closest: colony_swarmed"):
        read_table(path, columns=["colony_swarm"])


def test_truncated_version_8_file_is_one_clear_problem(tmp_path: Path) -> None:
    good = _write(LONG, tmp_path / "good.xpt", 8).read_bytes()
    bad = tmp_path / "cut.xpt"
    bad.write_bytes(good[:200])
    with pytest.raises(InputProblem, match="cannot read .*cut.xpt as a SAS transport file"):
        read_table(bad)
    with pytest.raises(InputProblem, match="cut.xpt"):
        list_columns(bad)


def test_version_8_without_pyreadstat_says_what_to_install(tmp_path, monkeypatch) -> None:
    path = _write(LONG, tmp_path / "hives.xpt", 8)
    real_import = builtins.__import__

    def no_pyreadstat(name, *args, **kwargs):
        if name == "pyreadstat":
            raise ImportError("no pyreadstat here")
        return real_import(name, *args, **kwargs)

    monkeypatch.delitem(sys.modules, "pyreadstat")
    monkeypatch.setattr(builtins, "__import__", no_pyreadstat)
    with pytest.raises(InputProblem, match=r"version 8 SAS transport.*pip install"):
        read_table(path)
    with pytest.raises(InputProblem, match=r"version 8 SAS transport.*pip install"):
        list_columns(path)


def test_scan_reads_a_version_8_file(tmp_path: Path) -> None:
    rng = np.random.default_rng(7)
    x = rng.uniform(0, 10, 400)
    frame = pd.DataFrame(
        {
            "nectar_flow_index": x,
            "colony_swarmed": (rng.uniform(size=400) < 1 / (1 + np.exp(-(x - 5)))).astype(float),
        }
    )
    path = _write(frame, tmp_path / "flow.xpt", 8)
    out = run_cli("scan", str(path), "--outcome", "colony_swarmed")
    assert out.returncode == 0, out.stderr
    assert "nectar_flow_index" in out.stdout

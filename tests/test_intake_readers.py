"""Reading every supported format, and one clear InputProblem for each kind of bad file."""

from __future__ import annotations

import hashlib
import os
import sys
from decimal import Decimal
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from pandas.api.types import is_numeric_dtype

from tui.intake import SUPPORTED, list_columns, read_column, read_table
from tui.intake.readers import drop_cached_table
from tui.problems import InputProblem

# Invented scenario: seedlings in a greenhouse trial, did each one wilt?
# Names stay within 8 characters so the SAS transport format can hold them.
SEEDLINGS = pd.DataFrame(
    {
        "moist": [0.0, 12.5, np.nan, 31.25, 7.0, 18.0],
        "height": [4, 9, 13, 6, 11, 8],
        "tray": ["north", "south", None, "north", "east", "south"],
        "wilted": [1, 0, 0, 1, 1, 0],
    }
)


def sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def write_csv(frame: pd.DataFrame, path: Path) -> None:
    frame.to_csv(path, index=False)


def write_tsv(frame: pd.DataFrame, path: Path) -> None:
    frame.to_csv(path, index=False, sep="\t")


def write_txt_tab(frame: pd.DataFrame, path: Path) -> None:
    frame.to_csv(path, index=False, sep="\t")


def write_txt_semicolon(frame: pd.DataFrame, path: Path) -> None:
    frame.to_csv(path, index=False, sep=";", decimal=",")


def write_parquet(frame: pd.DataFrame, path: Path) -> None:
    frame.to_parquet(path, index=False)


def write_feather(frame: pd.DataFrame, path: Path) -> None:
    frame.to_feather(path)


def write_dta(frame: pd.DataFrame, path: Path) -> None:
    frame.to_stata(path, write_index=False)


def write_xpt(frame: pd.DataFrame, path: Path) -> None:
    pyreadstat = pytest.importorskip("pyreadstat")
    # pandas reads only version 5 transport files.
    pyreadstat.write_xport(frame, str(path), file_format_version=5)


def write_sav(frame: pd.DataFrame, path: Path) -> None:
    pyreadstat = pytest.importorskip("pyreadstat")
    pyreadstat.write_sav(frame, str(path))


WRITERS = [
    ("seedlings.csv", write_csv),
    ("seedlings.tsv", write_tsv),
    ("seedlings_tab.txt", write_txt_tab),
    ("seedlings_semicolon.txt", write_txt_semicolon),
    ("seedlings.parquet", write_parquet),
    ("seedlings.feather", write_feather),
    ("seedlings.dta", write_dta),
    ("seedlings.xpt", write_xpt),
    ("seedlings.sav", write_sav),
]


@pytest.mark.parametrize(("filename", "write"), WRITERS, ids=[name for name, _ in WRITERS])
def test_round_trip_every_writable_format(tmp_path: Path, filename: str, write) -> None:
    path = tmp_path / filename
    write(SEEDLINGS, path)
    before = sha(path)

    frame = read_table(path)

    assert list(frame.columns) == list(SEEDLINGS.columns)
    assert list(frame.index) == list(range(len(SEEDLINGS)))
    for name in ("moist", "height", "wilted"):
        assert is_numeric_dtype(frame[name]), name
        np.testing.assert_array_equal(
            frame[name].to_numpy(dtype=float), SEEDLINGS[name].to_numpy(dtype=float)
        )
    assert not is_numeric_dtype(frame["tray"])
    assert frame["tray"].isna().tolist() == SEEDLINGS["tray"].isna().tolist()
    assert frame["tray"].dropna().tolist() == SEEDLINGS["tray"].dropna().tolist()

    assert list_columns(path) == list(SEEDLINGS.columns)
    moist = read_column(path, "moist")
    assert moist.name == "moist"
    np.testing.assert_array_equal(moist.to_numpy(dtype=float), SEEDLINGS["moist"].to_numpy())
    assert read_table(path, columns=["wilted", "moist"]).columns.tolist() == ["wilted", "moist"]

    assert sha(path) == before
    drop_cached_table()


def test_transport_zeros_read_as_zero(tmp_path: Path) -> None:
    pyreadstat = pytest.importorskip("pyreadstat")
    path = tmp_path / "zeros.xpt"
    pyreadstat.write_xport(
        pd.DataFrame({"dose": [0.0, -0.0, 1.0, 2.5]}), str(path), file_format_version=5
    )
    # pandas alone decodes these zeros as 2**-260 (pandas issue #50670, read on GitHub).
    assert read_table(path)["dose"].tolist() == [0.0, 0.0, 1.0, 2.5]


def test_extension_is_case_insensitive(tmp_path: Path) -> None:
    path = tmp_path / "SEEDLINGS.CSV"
    write_csv(SEEDLINGS, path)
    assert read_table(path)["height"].tolist() == SEEDLINGS["height"].tolist()


def test_txt_sniffs_comma_from_first_line(tmp_path: Path) -> None:
    path = tmp_path / "seedlings.txt"
    path.write_text("moist,tray\n1.5,north\n2.5,south\n")
    frame = read_table(path)
    assert frame["moist"].tolist() == [1.5, 2.5]
    assert frame["tray"].tolist() == ["north", "south"]


def test_semicolon_txt_reads_decimal_commas_but_leaves_text_alone(tmp_path: Path) -> None:
    path = tmp_path / "trial.txt"
    path.write_text("moist;label;count\n1,5;a,b;3\n-2,25;c;4\n;d;5\n")
    frame = read_table(path)
    assert frame["moist"].tolist()[:2] == [1.5, -2.25]
    assert np.isnan(frame["moist"].iloc[2])
    assert not is_numeric_dtype(frame["label"])
    assert frame["count"].tolist() == [3, 4, 5]


def test_short_lines_fall_back_to_c_parser(tmp_path: Path) -> None:
    path = tmp_path / "short.csv"
    path.write_text("moist,height\n1.0,4\n2.0\n3.0,6\n")
    frame = read_table(path)
    assert frame["moist"].tolist() == [1.0, 2.0, 3.0]
    assert frame["height"].isna().tolist() == [False, True, False]


def test_line_with_extra_fields_is_an_input_problem(tmp_path: Path) -> None:
    path = tmp_path / "ragged.csv"
    path.write_text("moist,height\n1.0,4\n2.0,5,99\n")
    with pytest.raises(InputProblem, match="ragged.csv") as caught:
        read_table(path)
    assert "\n" not in str(caught.value)


def test_every_line_longer_than_header_is_an_input_problem(tmp_path: Path) -> None:
    # pandas would otherwise make the first field an index or drop the last one quietly.
    path = tmp_path / "wide.csv"
    path.write_text("moist,height\n1.0,4,7\n2.0,5,8\n")
    with pytest.raises(InputProblem, match="more fields than the header"):
        read_table(path)


def test_text_that_is_not_utf8_is_an_input_problem(tmp_path: Path) -> None:
    path = tmp_path / "latin.csv"
    path.write_bytes("moist,r\xe9gion\n1,nord\n".encode("latin-1"))
    with pytest.raises(InputProblem, match=r"latin\.csv.*not UTF-8"):
        read_table(path)


def test_text_with_gaps_in_booleans_comes_back_boolean(tmp_path: Path) -> None:
    path = tmp_path / "flags.csv"
    path.write_text("shaded,wilted\nTrue,1\n,0\nFalse,1\n")
    frame = read_table(path)
    assert frame["shaded"].dtype == "boolean"
    assert frame["shaded"].isna().tolist() == [False, True, False]


def test_columns_argument_reads_in_order_and_names_unknown(tmp_path: Path) -> None:
    path = tmp_path / "seedlings.csv"
    write_csv(SEEDLINGS, path)
    assert read_table(path, columns=["tray", "moist"]).columns.tolist() == ["tray", "moist"]
    with pytest.raises(InputProblem, match=r"column 'hieght' not found in .*closest: height"):
        read_table(path, columns=["hieght"])
    with pytest.raises(InputProblem, match=r"columns not found in .*: 'a', 'b'"):
        read_table(path, columns=["a", "b"])


def test_read_column_on_parquet_reads_only_that_column(tmp_path: Path, monkeypatch) -> None:
    path = tmp_path / "seedlings.parquet"
    write_parquet(SEEDLINGS, path)
    asked: list[object] = []
    import pyarrow.parquet as pq

    real = pq.ParquetFile.read

    def spy(self, *args, **kwargs):  # the file is kept open, its footer read once
        asked.append(kwargs.get("columns"))
        return real(self, *args, **kwargs)

    monkeypatch.setattr(pq.ParquetFile, "read", spy)
    height = read_column(path, "height")
    assert isinstance(height, pd.Series)
    assert height.tolist() == SEEDLINGS["height"].tolist()
    assert asked == [["height"]]
    with pytest.raises(InputProblem, match="column 'heigth' not found"):
        read_column(path, "heigth")


def test_read_column_on_text_parses_file_once_then_notices_changes(
    tmp_path: Path, monkeypatch
) -> None:
    path = tmp_path / "seedlings.csv"
    write_csv(SEEDLINGS, path)
    drop_cached_table()
    parses: list[str] = []
    real = pd.read_csv

    def counting(*args, **kwargs):
        parses.append(kwargs.get("engine"))
        return real(*args, **kwargs)

    monkeypatch.setattr(pd, "read_csv", counting)  # the readers import pandas when called
    for name in SEEDLINGS.columns:
        read_column(path, name)
    assert len(parses) == 1

    write_csv(SEEDLINGS.assign(height=SEEDLINGS["height"] * 10), path)
    stat = path.stat()
    os.utime(path, ns=(stat.st_atime_ns, stat.st_mtime_ns + 5_000_000_000))
    assert read_column(path, "height").tolist() == (SEEDLINGS["height"] * 10).tolist()
    assert len(parses) == 2
    drop_cached_table()


def test_parquet_index_is_not_a_column(tmp_path: Path) -> None:
    path = tmp_path / "indexed.parquet"
    SEEDLINGS.set_index(pd.Index([101, 102, 103, 104, 105, 106], name="plant")).to_parquet(path)
    assert list_columns(path) == list(SEEDLINGS.columns)
    frame = read_table(path)
    assert list(frame.columns) == list(SEEDLINGS.columns)
    assert list(frame.index) == list(range(len(SEEDLINGS)))


def test_parquet_decimals_come_back_numeric(tmp_path: Path) -> None:
    import pyarrow as pa
    import pyarrow.parquet as pq

    path = tmp_path / "decimals.parquet"
    prices = pa.array([Decimal("1.25"), None, Decimal("3.50")], type=pa.decimal128(6, 2))
    pq.write_table(pa.table({"price": prices}), path)
    column = read_table(path)["price"]
    assert is_numeric_dtype(column)
    assert column.tolist()[0] == 1.25
    assert np.isnan(column.tolist()[1])


def test_unsupported_extension_lists_supported_ones(tmp_path: Path) -> None:
    path = tmp_path / "seedlings.xlsx"
    path.write_bytes(b"not really a workbook")
    with pytest.raises(InputProblem) as caught:
        read_table(path)
    message = str(caught.value)
    assert "seedlings.xlsx" in message and "'.xlsx'" in message
    for ext in SUPPORTED:
        assert ext in message


def test_file_without_extension_is_unsupported(tmp_path: Path) -> None:
    path = tmp_path / "seedlings"
    path.write_text("a,b\n1,2\n")
    with pytest.raises(InputProblem, match="no file extension; supported: .csv"):
        list_columns(path)


def test_missing_file(tmp_path: Path) -> None:
    path = tmp_path / "absent.csv"
    with pytest.raises(InputProblem, match=r"file not found: .*absent\.csv"):
        read_table(path)
    with pytest.raises(InputProblem, match="file not found"):
        read_column(path, "moist")


def test_directory_is_not_a_data_file(tmp_path: Path) -> None:
    folder = tmp_path / "batch.parquet"
    folder.mkdir()
    with pytest.raises(InputProblem, match="is a directory"):
        read_table(folder)


def test_empty_file(tmp_path: Path) -> None:
    path = tmp_path / "nothing.csv"
    path.write_bytes(b"")
    with pytest.raises(InputProblem, match=r"nothing\.csv is empty"):
        read_table(path)


def test_blank_lines_only_has_no_columns(tmp_path: Path) -> None:
    path = tmp_path / "blank.tsv"
    path.write_text("\n\n\n")
    with pytest.raises(InputProblem, match=r"blank\.tsv.*no columns"):
        read_table(path)


@pytest.mark.parametrize("ext", [".sas7bdat", ".xpt", ".parquet", ".feather", ".dta", ".sav"])
def test_corrupt_binary_file_is_an_input_problem(tmp_path: Path, ext: str) -> None:
    if ext == ".sav":
        pytest.importorskip("pyreadstat")
    path = tmp_path / f"garbled{ext}"
    path.write_bytes(bytes(range(256)) * 8)
    before = sha(path)
    with pytest.raises(InputProblem, match=f"cannot read .*garbled\\{ext}") as caught:
        read_table(path)
    assert "\n" not in str(caught.value)
    with pytest.raises(InputProblem, match=f"garbled\\{ext}"):
        list_columns(path)
    assert sha(path) == before


def test_sav_without_pyreadstat_says_what_to_install(tmp_path: Path, monkeypatch) -> None:
    path = tmp_path / "survey.sav"
    path.write_bytes(b"$FL2 pretend contents")
    monkeypatch.setitem(sys.modules, "pyreadstat", None)  # makes "import pyreadstat" fail
    with pytest.raises(InputProblem, match=r"bendwise\[spss\]"):
        read_table(path)

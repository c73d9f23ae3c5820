"""The one "would this overwrite an input" check, used by scan, replay, report and the app."""

import os

from tui.paths import same_file


def test_one_file_under_several_names(tmp_path, monkeypatch):
    data = tmp_path / "cohort.csv"
    data.write_text("a\n1\n")
    monkeypatch.chdir(tmp_path)
    assert same_file("cohort.csv", data)
    assert same_file(tmp_path / "sub" / ".." / "cohort.csv", data)
    (tmp_path / "link.csv").symlink_to(data)
    assert same_file(tmp_path / "link.csv", data)
    os.link(data, tmp_path / "hard.csv")
    assert same_file(tmp_path / "hard.csv", data)


def test_different_files_and_files_not_yet_written(tmp_path):
    data = tmp_path / "cohort.csv"
    data.write_text("a\n1\n")
    other = tmp_path / "other.csv"
    other.write_text("a\n1\n")  # equal contents are not the same file
    assert not same_file(other, data)
    assert not same_file(tmp_path / "new.csv", data)
    assert same_file(tmp_path / "new.csv", tmp_path / "new.csv")  # refused before it exists

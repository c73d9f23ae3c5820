"""``bendwise replay --rename``: a later extract that calls a recoded column by another name."""

import pandas as pd
from conftest import REPO, SAMPLE, run_cli

LOG = REPO / "tests" / "golden" / "every_kind.recodings.json"
FRESH = SAMPLE / "surgical_cohort_fresh.csv"


def test_renamed_column_is_replayed_under_its_new_name(tmp_path):
    out = tmp_path / "fresh.csv"
    done = run_cli("replay", str(LOG), str(FRESH), "--output", str(out),
                   "--rename", "albumin_g_l=serum_albumin_g_l")  # fmt: skip
    assert done.returncode == 0, done.stderr
    frame = pd.read_csv(out)
    assert "serum_albumin_g_l" in frame.columns and "albumin_g_l" not in frame.columns
    assert any(c.startswith("albumin_g_l__") for c in frame.columns)


def test_without_rename_the_missing_column_stops_replay(tmp_path):
    out = tmp_path / "fresh.csv"
    done = run_cli("replay", str(LOG), str(FRESH), "--output", str(out))
    assert done.returncode == 2 and "serum_albumin_g_l" in done.stderr
    assert not out.exists()


def test_rename_to_a_column_that_is_not_there(tmp_path):
    done = run_cli("replay", str(LOG), str(FRESH), "--output", str(tmp_path / "o.csv"),
                   "--rename", "albumin_g_l=albumen")  # fmt: skip
    assert done.returncode == 2 and "albumen" in done.stderr
    assert len(done.stderr.strip().splitlines()) == 1

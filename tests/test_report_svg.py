"""The HTML report's pictures: real charts (ticks, labels, axis titles, smoother, legend, a
printable size), self-contained, in the review screen's window; rendered in headless
Chromium when it is installed (``apt-get install chromium``), skipped otherwise."""

from __future__ import annotations

import re
import shutil
import subprocess
from html import unescape
from pathlib import Path

import numpy as np
import pytest
from test_report import COHORT, FIXED_NOW, _sample_log

from tui.engine.counts import reduce_column
from tui.engine.groups import logit_groups
from tui.engine.plot_window import plot_window
from tui.intake.dataset import open_dataset
from tui.report import build_report, render_html

SVG = re.compile(r"<svg\b.*?</svg>", re.S)


@pytest.fixture(scope="module")
def report():
    data = open_dataset(COHORT, "wound_infection_30d")
    return build_report(_sample_log(), data, min_cell=10, now=FIXED_NOW)


@pytest.fixture(scope="module")
def html(report) -> str:
    return render_html(report)


def test_every_decision_has_a_chart_with_ticks_titles_and_a_legend(report, html):
    pictures = SVG.findall(html)
    assert len(pictures) == len(report.decisions)
    for d, svg in zip(report.decisions, pictures, strict=True):
        texts = [unescape(t) for t in re.findall(r"<text[^>]*>([^<]*)</text>", svg)]
        assert f"{d.column} (central 95% of rows)" in texts
        assert "log-odds of wound_infection_30d" in texts
        for entry in ("LOWESS smoother", "linear fit", f"accepted: {d.form}",
                      "quantile group: empirical logit ± 1.96 SE"):  # fmt: skip
            assert entry in texts, entry
        numbers = [t for t in texts if re.fullmatch(r"[−-]?\d+(\.\d+)?", t)]
        assert len(numbers) >= 8  # at least four tick labels on each axis
        width = float(re.search(r'width="([\d.]+)pt"', svg)[1])
        assert width >= 6 * 72  # six inches or more: reads on a printed page


def test_the_pictures_are_self_contained(html):
    for svg in SVG.findall(html):
        low = svg.lower()
        assert "<script" not in low and "http" not in low and 'href="http' not in low
        assert "<?xml" not in low and "<!doctype" not in low
        ids = re.findall(r'id="([^"]+)"', svg)
        assert len(ids) == len(set(ids))
    all_ids = re.findall(r'id="([^"]+)"', html)
    assert len(all_ids) == len(set(all_ids)), "ids clash between pictures"


def test_the_report_draws_in_the_review_screens_window(report):
    # The same engine function sets the window for the screen and the report.
    data = open_dataset(COHORT, "wound_infection_30d")
    d = next(s for s in report.decisions if s.column == "creatinine_umol_l")
    counts = reduce_column(data.values("creatinine_umol_l"), data.outcome.y)
    groups = logit_groups(counts, d.evidence.groups)
    window = plot_window(counts, groups, None)
    assert (d.window.x_low, d.window.x_high) == (window.x_low, window.x_high)
    # Creatinine is long-tailed: the window stops well short of the maximum, and says so.
    assert d.window.beyond_high and d.window.x_high < float(np.nanmax(counts.x))
    assert d.curve is not None and min(d.curve.x) == d.window.x_low


def test_chromium_renders_the_report(tmp_path: Path, html):
    browser = shutil.which("chromium") or shutil.which("chromium-browser")
    if browser is None:
        pytest.skip("chromium is not installed (apt-get install chromium)")
    page = tmp_path / "report.html"
    page.write_text(html)
    shot = tmp_path / "report.png"
    command = [browser, "--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars",
               f"--screenshot={shot}", "--window-size=1200,2400", page.as_uri()]  # fmt: skip
    done = subprocess.run(command, capture_output=True, timeout=120)
    assert done.returncode == 0, done.stderr.decode(errors="replace")[-500:]
    assert shot.stat().st_size > 50_000  # a page with pictures, not a blank one

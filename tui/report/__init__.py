"""The decision report: how each predictor's form was chosen, safe to release after checking."""

from tui.report.content import ReportContent, build_report
from tui.report.html import render_html
from tui.report.markdown import render_markdown

__all__ = ["ReportContent", "build_report", "render_html", "render_markdown"]

"""``bendwise report``: a decision report for model documentation, checked for small cells."""

from __future__ import annotations

import argparse
from pathlib import Path

from tui import recodings
from tui.cli.source_options import add_source_options, reduced
from tui.intake.dataset import open_dataset
from tui.intake.sources import local_path
from tui.intake.weights import FREQUENCY, WEIGHT_KINDS
from tui.paths import check_output, write_output
from tui.problems import InputProblem
from tui.report import build_report, render_html, render_markdown
from tui.report.cells import DEFAULT_MIN_CELL

RENDERERS = {".md": render_markdown, ".html": render_html}


def add_parser(commands: argparse._SubParsersAction) -> None:
    parser = commands.add_parser(
        "report",
        help="write a Markdown or HTML report of the decisions in a recoding log",
        description="Recompute the evidence for every decision in LOG from DATA and write a "
        "report (FILE ending .md or .html). Counts below --min-cell are not printed.",
    )
    parser.add_argument("log", metavar="LOG", help="recoding log (JSON)")
    parser.add_argument(
        "--data",
        required=True,
        metavar="DATA",
        help="data the log was made on: a file, PATH.duckdb, postgresql://... or spark:NAME",
    )
    add_source_options(parser)
    parser.add_argument("--output", required=True, metavar="FILE", help="report file: .md or .html")
    parser.add_argument("--force", action="store_true", help="replace FILE if it exists")
    parser.add_argument(
        "--min-cell",
        type=int,
        default=DEFAULT_MIN_CELL,
        metavar="N",
        help=f"smallest count printed; smaller ones show as <N (default {DEFAULT_MIN_CELL})",
    )
    parser.add_argument("--weight", metavar="COL", help="row weights used in every fit")
    parser.add_argument(
        "--weight-kind",
        choices=WEIGHT_KINDS,
        default=FREQUENCY,
        help="frequency: each row stands for w rows; survey: sampling weights",
    )
    parser.set_defaults(run=run)


def event_option(event: object) -> str | None:
    """The log's event as the --event text that codes the outcome the same way."""
    if event is None or event is True or (isinstance(event, int | float) and event == 1):
        return None
    return str(event)


def run(args: argparse.Namespace) -> int:
    target = Path(args.output)
    render = RENDERERS.get(target.suffix.lower())
    if render is None:
        raise InputProblem(f"--output must end in .md or .html, not {target.name!r}")
    check_output(
        target, [("recoding log", args.log), ("data file", local_path(args.data))], args.force
    )
    log = recodings.load(args.log)
    data = reduced(args, log.outcome_column, event_option(log.event))
    if data is None:
        data = open_dataset(args.data, log.outcome_column, event_option(log.event))
    report = build_report(
        log, data, min_cell=args.min_cell, weight=args.weight, weight_kind=args.weight_kind
    )
    write_output(target, render(report))
    return 0

"""``bendwise report``: a decision report for model documentation, checked for small cells."""

from __future__ import annotations

import argparse
from pathlib import Path

from tui import recodings
from tui.cli.source_options import add_source_options, opened_source, reduced
from tui.engine.reduced_data import record_of
from tui.intake.dataset import Dataset, open_dataset
from tui.intake.sources import local_path
from tui.intake.sources.fetched import fetched_dataset, needed_columns
from tui.intake.weights import FREQUENCY, WEIGHT_KINDS
from tui.paths import check_output, write_output
from tui.problems import InputProblem
from tui.report import build_report, render_html, render_markdown
from tui.report.cells import DEFAULT_MIN_CELL
from tui.report.source_data import FetchedFrom, rows_needed

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
    event = event_option(log.event)
    got = _fetched(args, log, event) if rows_needed(log, args.weight) else None
    data, origin = got if got is not None else (reduced(args, log.outcome_column, event), None)
    if data is None:
        data = open_dataset(args.data, log.outcome_column, event)
    report = build_report(
        log, data, min_cell=args.min_cell, weight=args.weight, weight_kind=args.weight_kind,
        origin=origin,
    )  # fmt: skip
    write_output(target, render(report))
    return 0


def _fetched(
    args: argparse.Namespace, log: recodings.RecodingLog, event: str | None
) -> tuple[Dataset, FetchedFrom] | None:
    """Weights and covariates need rows: from a source, its numeric columns are fetched
    under --row-cap (refused above it); None when DATA is a file."""
    source = opened_source(args)
    if source is None:
        return None
    try:
        outcome = log.outcome_column
        names = needed_columns(source, outcome, (), rows_needed(log, args.weight))
        data = fetched_dataset(source, outcome, event, names, args.row_cap)
        return data, FetchedFrom(source.label, record_of(source, outcome, event))
    finally:
        source.close()

"""``bendwise scan``: rank every numeric column by evidence of non-linearity."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from tui.atomic import atomic_write_text
from tui.cli.common import add_data_options, add_fit_options
from tui.cli.progress import Progress
from tui.cli.scan_output import as_csv, as_json, as_table
from tui.engine.runner import scan_columns
from tui.engine.scan import ScanSettings, rank
from tui.intake.dataset import open_dataset
from tui.intake.errors import InputProblem


def add_parser(commands: argparse._SubParsersAction) -> None:
    parser = commands.add_parser(
        "scan",
        help="rank numeric columns by evidence of non-linearity",
        description="Score every numeric column: likelihood-ratio test of a restricted "
        "cubic spline against a linear term, with Benjamini-Hochberg q-values.",
    )
    add_data_options(parser)
    add_fit_options(parser)
    parser.add_argument(
        "--format", choices=("table", "csv", "json"), default="table", help="output format"
    )
    parser.add_argument("--output", metavar="FILE", help="write here instead of stdout")
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    if args.output and Path(args.output).resolve() == Path(args.data).resolve():
        raise InputProblem(f"--output {args.output} would overwrite the data file")
    data = open_dataset(args.data, args.outcome, args.event, args.exclude)
    settings = ScanSettings(groups=args.groups, knots=args.knots)
    progress = Progress(len(data.columns), enabled=sys.stderr.isatty())
    results = []
    for result in scan_columns(data.columns, data.raw_values, data.outcome.y, settings):
        results.append(result)
        progress.step(result.column)
    progress.close()
    ranked = rank(results)
    if args.format == "json":
        text = as_json(ranked)
    elif args.format == "csv":
        text = as_csv(ranked)
    else:
        skipped = [(p.name, f"not numeric: {p.dtype}") for p in data.skipped]
        text = as_table(ranked, skipped)
    if args.output:
        atomic_write_text(args.output, text)
    else:
        sys.stdout.write(text)
    return 0

"""``bendwise forms``: one column's candidate table, for scripts and documentation."""

from __future__ import annotations

import argparse
import json
import sys

from tui.cli.common import add_fit_options
from tui.cli.forms_output import as_table
from tui.cli.source_options import add_source_options, reduced
from tui.engine.column_fits import CandidateSet
from tui.engine.counts import ReducedCounts
from tui.engine.forms_listing import list_forms
from tui.engine.scan import ScanSettings, reduce_for_scan
from tui.engine.stability import DEFAULT_SEED
from tui.intake.dataset import open_dataset
from tui.problems import InputProblem


def resample_count(text: str) -> int:
    value = int(text) if text.isdigit() else -1
    if not 1 <= value <= 100_000:
        raise argparse.ArgumentTypeError(f"resamples must be 1 to 100000, not {text!r}")
    return value


def seed_number(text: str) -> int:
    if not text.isdigit():
        raise argparse.ArgumentTypeError(f"seed must be a whole number ≥ 0, not {text!r}")
    return int(text)


def add_parser(commands: argparse._SubParsersAction) -> None:
    parser = commands.add_parser(
        "forms",
        help="print one column's candidate forms (with bootstrap shares on request)",
        description="Fit every candidate form of one column and print the comparison table; "
        "with --resamples, how often each form had the lowest AIC across bootstrap resamples.",
    )
    parser.add_argument(
        "data", metavar="DATA", help="data file, PATH.duckdb, postgresql://... or spark:NAME"
    )
    parser.add_argument("--outcome", required=True, metavar="COL", help="binary outcome column")
    parser.add_argument(
        "--event", metavar="VALUE", help="outcome value that counts as the event (text outcomes)"
    )
    parser.add_argument("--column", required=True, metavar="C", help="the numeric column")
    add_fit_options(parser)
    add_source_options(parser)
    parser.add_argument(
        "--resamples", type=resample_count, metavar="B", help="bootstrap resamples (e.g. 200)"
    )
    parser.add_argument(
        "--seed",
        type=seed_number,
        default=DEFAULT_SEED,
        metavar="S",
        help=f"seed of the resampling (default {DEFAULT_SEED})",
    )
    parser.add_argument("--format", choices=("table", "json"), default="table")
    parser.set_defaults(run=run)


def _source_counts(args: argparse.Namespace) -> ReducedCounts | None:
    """The column's counts reduced inside the engine; None when DATA is a file."""
    data = reduced(args, args.outcome, args.event, names=[args.column])
    if data is None:
        return None
    if args.column not in data.columns:
        raise InputProblem(f"column '{args.column}' is not numeric in {data.label}")
    return data.counts(args.column)


def run(args: argparse.Namespace) -> int:
    if args.column == args.outcome:
        raise InputProblem(f"'{args.column}' is the outcome")
    counts = _source_counts(args)
    if counts is None:
        counts = _file_counts(args)
    wanted = CandidateSet(args.groups, args.knots)
    listing = list_forms(counts, wanted, args.resamples, args.seed)
    if listing.fitted.table is None:
        raise InputProblem(f"'{args.column}' cannot be fitted: {listing.fitted.problem}")
    if args.format == "json":
        sys.stdout.write(json.dumps(listing.records(), indent=2) + "\n")
    else:
        sys.stdout.write(as_table(args.column, listing))
    return 0


def _file_counts(args: argparse.Namespace) -> ReducedCounts:
    data = open_dataset(args.data, args.outcome, args.event, [])
    if args.column not in data.column_names:
        raise InputProblem(f"{data.path.name} has no column '{args.column}'")
    if args.column not in data.columns:
        raise InputProblem(f"column '{args.column}' is not numeric in {data.path.name}")
    x = data.raw_values(args.column)
    return reduce_for_scan(x, data.outcome.y, ScanSettings(), None, args.column).counts

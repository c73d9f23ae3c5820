"""``bendwise scan``: rank every numeric column by evidence of non-linearity."""

from __future__ import annotations

import argparse
import shutil
import sys

from tui.cli.common import add_adjust_options, add_data_options, add_fit_options
from tui.cli.progress import Progress
from tui.cli.scan_output import ELIDE_HELP, as_csv, as_json, as_table
from tui.cli.source_options import add_source_options, fetched_rows, opened_source, scan_results
from tui.engine.adjust import Adjustment, open_adjustment
from tui.engine.flags import NOT_NUMERIC
from tui.engine.runner import scan_columns
from tui.engine.scan import ColumnScan, ScanSettings, rank
from tui.engine.two_pass import TwoPassScan
from tui.intake.dataset import ColumnarDataset, Dataset, open_dataset, require_numeric
from tui.intake.sources import local_path
from tui.paths import check_output, write_output

STAGES = {"score": "scores", "forms": "forms"}
"""The two passes and the word each one's bar shows."""


def add_parser(commands: argparse._SubParsersAction) -> None:
    parser = commands.add_parser(
        "scan",
        help="rank numeric columns by evidence of non-linearity",
        description="Score every numeric column: likelihood-ratio test of a restricted "
        "cubic spline against a linear term, with Benjamini-Hochberg q-values. " + ELIDE_HELP,
    )
    add_data_options(parser)
    add_fit_options(parser)
    add_adjust_options(parser, forms_from_log=True)
    add_source_options(parser)
    parser.add_argument(
        "--format", choices=("table", "csv", "json"), default="table", help="output format"
    )
    parser.add_argument("--output", metavar="FILE", help="write here instead of stdout")
    parser.add_argument("--force", action="store_true", help="replace FILE if it exists")
    parser.set_defaults(run=run)


def not_scanned(data: Dataset | ColumnarDataset, column: str) -> ColumnScan:
    """A non-numeric column, listed with its counts so that nothing is silently dropped."""
    present = data.present(column)
    profile = next(p for p in data.skipped if p.name == column)
    return ColumnScan(
        column=column,
        rows=int(present.size),
        n=int(present.sum()),
        missing=int((~present).sum()),
        events=int(data.outcome.y[present].sum()),
        distinct=profile.distinct,
        flags=(NOT_NUMERIC,),
    )


def _two_passes(
    columns: list[str],
    data: Dataset | ColumnarDataset,
    settings: ScanSettings,
    adjust: Adjustment | None,
) -> list[ColumnScan]:
    bars = {stage: Progress(len(columns), enabled=sys.stderr.isatty()) for stage in STAGES}
    results = []
    scan = TwoPassScan(
        columns,
        data.raw_values,
        data.outcome.y,
        settings,
        adjust=adjust,
        many_of=data.raw_values_many,
    )
    for step in scan:
        bars[step.stage].step(f"{STAGES[step.stage]}: {step.scan.column}")
        if step.done == step.total:
            bars[step.stage].close()
        if step.stage == "forms":
            results.append(step.scan)
    return results


def _adjusted(
    columns: list[str],
    data: Dataset | ColumnarDataset,
    settings: ScanSettings,
    adjust: Adjustment | None,
) -> list[ColumnScan]:
    progress = Progress(len(columns), enabled=sys.stderr.isatty())
    results = []
    for result in scan_columns(columns, data.raw_values, data.outcome.y, settings, adjust=adjust):
        results.append(result)
        progress.step(result.column)
    progress.close()
    return results


def run(args: argparse.Namespace) -> int:
    if args.output:
        inputs = [("data file", local_path(args.data))] + (
            [("recoding log", args.log)] if args.log else []
        )
        check_output(args.output, inputs, args.force)
    rows = [*args.adjust, *([args.weight] if args.weight else [])]
    got = fetched_rows(args, rows) if rows else None  # covariates need rows: capped
    data, listed = got if got is not None else (None, [])
    if data is None and not rows:
        source = opened_source(args)  # a database, Spark, or --engine duckdb: counts come back
        if source is not None:
            return _write(args, rank(scan_results(source, args)), "")
    if data is None:
        data = open_dataset(args.data, args.outcome, args.event, args.exclude)
    require_numeric(data, args.weight)
    forms = {}
    if args.log:
        from tui import recodings  # pandas comes with it: only a scan with a log pays

        forms = {d.column: d.recoding for d in recodings.load(args.log).decisions}
    adjust = open_adjustment(data, args.outcome, args.adjust, args.weight, args.weight_kind, forms)
    settings = ScanSettings(groups=args.groups, knots=args.knots)
    columns = [c for c in data.columns if c != args.weight]  # weights are not a predictor
    # Two passes: every column's score first, then every column's forms; a bar for each.
    # Adjusted columns share one covariate block in one pass (engine.adjusted_scan).
    results = (
        _adjusted(columns, data, settings, adjust)
        if adjust is not None and adjust.covariates is not None
        else _two_passes(columns, data, settings, adjust)
    )
    ranked = rank(results + [not_scanned(data, p.name) for p in data.skipped] + listed)
    return _write(args, ranked, adjust.describe() if adjust else "")


def _write(args: argparse.Namespace, ranked: list[ColumnScan], adjusted: str) -> int:
    if args.format == "json":
        text = as_json(ranked)
    elif args.format == "csv":
        text = as_csv(ranked)
    else:
        # Fitted to a terminal; full width into a file or a pipe.
        width = (
            shutil.get_terminal_size().columns if sys.stdout.isatty() and not args.output else None
        )
        text = as_table(ranked, adjusted, width)
    if args.output:
        write_output(args.output, text)
    else:
        sys.stdout.write(text)
    return 0

"""Options and dispatch for data that lives in an engine (DuckDB, PostgreSQL, Spark)."""

from __future__ import annotations

import argparse

from tui.engine.pushed import scan_source
from tui.engine.reduced_data import ReducedData, reduce_data, text_listing
from tui.engine.scan import ColumnScan, ScanSettings
from tui.intake.dataset import Dataset
from tui.intake.sources import Source, open_source
from tui.intake.sources.fetched import DEFAULT_ROW_CAP, fetched_dataset, needed_columns
from tui.problems import InputProblem

ENGINES = ("pandas", "duckdb")


def add_source_options(parser: argparse.ArgumentParser) -> None:
    """--table, --query, --engine and --spark-master."""
    parser.add_argument("--table", metavar="[SCHEMA.]NAME", help="table of a database DATA")
    parser.add_argument("--query", metavar="SQL", help="query whose rows a database DATA scans")
    parser.add_argument(
        "--engine",
        choices=ENGINES,
        default="pandas",
        help="duckdb: reduce a CSV or Parquet file inside DuckDB without loading it",
    )
    parser.add_argument(
        "--row-cap",
        type=row_cap,
        default=DEFAULT_ROW_CAP,
        metavar="N",
        help="most rows fetched from a database for --adjust or --weight, which need rows "
        f"(default {DEFAULT_ROW_CAP:,}; above it the command stops)",
    )
    parser.add_argument(
        "--spark-master",
        metavar="URL",
        help="Spark master for spark:NAME (default local[*]; Spark's own settings apply)",
    )


def row_cap(text: str) -> int:
    value = int(text) if text.isdigit() else -1
    if value < 1:
        raise argparse.ArgumentTypeError(f"row cap must be a whole number ≥ 1, not {text!r}")
    return value


def fetched(args: argparse.Namespace, also: list[str]) -> tuple[Dataset, Source] | None:
    """The rows a check with covariates or weights needs, fetched under ``--row-cap``
    (None for a file). The source stays open for its fingerprint; the caller closes it."""
    source = opened_source(args)
    if source is None:
        return None
    try:
        names = needed_columns(source, args.outcome, args.exclude, also)
        return fetched_dataset(source, args.outcome, args.event, names, args.row_cap), source
    except BaseException:
        source.close()
        raise


def fetched_rows(
    args: argparse.Namespace, also: list[str]
) -> tuple[Dataset, list[ColumnScan]] | None:
    """``fetched``, and the text columns left in the engine listed from its counts."""
    got = fetched(args, also)
    if got is None:
        return None
    data, source = got
    try:
        return data, text_listing(source, args.outcome, args.event, data.column_names)
    finally:
        source.close()


def opened_source(args: argparse.Namespace) -> Source | None:
    """The source DATA names, or None when pandas reads it as a file."""
    return open_source(
        args.data,
        args.table,
        args.query,
        None if args.engine == "pandas" else args.engine,
        args.spark_master,
    )


def reduced(
    args: argparse.Namespace,
    outcome: str,
    event: str | None,
    names: list[str] | None = None,
    exclude: list[str] | tuple[str, ...] = (),
) -> ReducedData | None:
    """DATA reduced inside its engine (None for a file pandas reads); the source is
    closed once its counts are back."""
    source = opened_source(args)
    if source is None:
        return None
    try:
        return reduce_data(source, outcome, event, exclude, ScanSettings(), names)
    finally:
        source.close()


def scan_results(source: Source, args: argparse.Namespace) -> list[ColumnScan]:
    """Every column's scan from counts the engine reduced (q-values left for ``rank``);
    --adjust and --weight take the capped fetch instead (``fetched``)."""
    try:
        outcome = source.code_outcome(args.outcome, args.event)
        names = [c.name for c in source.columns()]
        unknown = [e for e in args.exclude if e not in names]
        if unknown:
            raise InputProblem(f"--exclude names unknown columns: {', '.join(unknown)}")
        chosen = [n for n in names if n != args.outcome and n not in args.exclude]
        settings = ScanSettings(groups=args.groups, knots=args.knots)
        return list(scan_source(source, outcome, chosen, settings))
    finally:
        source.close()

"""``bendwise sql``: print the recoding log as one SQL SELECT."""

from __future__ import annotations

import argparse
import sys

from tui.problems import InputProblem
from tui.recodings.load import load
from tui.recodings.sql import DIALECTS, to_sql


def add_parser(commands: argparse._SubParsersAction) -> None:
    parser = commands.add_parser(
        "sql",
        help="print a recoding log as SQL",
        description="Print one SELECT that keeps every column of TABLE and computes every "
        "output of the recoding log LOG inside the database (NULL where x is missing); "
        "with --view, a CREATE OR REPLACE VIEW statement around it.",
    )
    parser.add_argument("log", metavar="LOG", help="recoding log (.json)")
    parser.add_argument(
        "--dialect", choices=tuple(DIALECTS), default="duckdb", help="SQL dialect (default duckdb)"
    )
    parser.add_argument(
        "--table",
        metavar="NAME",
        help="table to read, optionally schema.table (default: the training file's name "
        "without its extension)",
    )
    parser.add_argument(
        "--view",
        metavar="NAME",
        help="print a CREATE OR REPLACE VIEW NAME (optionally schema.view) statement instead "
        "of the bare SELECT",
    )
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    log = load(args.log)
    try:
        text = to_sql(log, args.dialect, args.table, args.view)
    except ValueError as problem:
        raise InputProblem(str(problem)) from None
    sys.stdout.write(text)
    return 0

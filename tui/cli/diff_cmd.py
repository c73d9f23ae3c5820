"""``bendwise diff``: what changed between two recoding logs."""

from __future__ import annotations

import argparse
import sys

from tui.recodings.diff import as_json, as_table, diff_files


def add_parser(commands: argparse._SubParsersAction) -> None:
    parser = commands.add_parser(
        "diff",
        help="compare two recoding logs",
        description="List the recodings added, removed and changed from OLD_LOG to NEW_LOG "
        "(kind, parameters, clip, outputs, range and any other key that defines a recoding), "
        "the columns newly or no longer set aside, and changes of outcome or training file. "
        "Notes, times and evidence are not compared. Exit status: 0 when the logs define "
        "the same recodings, 1 when they differ, 2 when a log cannot be read.",
    )
    parser.add_argument("old", metavar="OLD_LOG", help="earlier recoding log (.json)")
    parser.add_argument("new", metavar="NEW_LOG", help="later recoding log (.json)")
    parser.add_argument(
        "--format",
        choices=("table", "json"),
        default="table",
        help="table (default) or json",
    )
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    diff = diff_files(args.old, args.new)
    render = as_json if args.format == "json" else as_table
    sys.stdout.write(render(diff, args.old, args.new))
    return 0 if diff.equal else 1

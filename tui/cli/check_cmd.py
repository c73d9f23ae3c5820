"""``bendwise check LOG DATA``: whether each logged choice holds on a later extract."""

from __future__ import annotations

import argparse
import sys

from tui import recodings
from tui.atomic import atomic_write_text
from tui.cli.check_output import as_json, as_table
from tui.cli.replay_cmd import _rename_pair
from tui.cli.report_cmd import event_option
from tui.cli.source_options import add_source_options, opened_source
from tui.intake.dataset import open_dataset
from tui.intake.sources import local_path
from tui.names import with_closest
from tui.paths import same_file
from tui.problems import InputProblem
from tui.recodings.check import ColumnCheck, check_log
from tui.recodings.check_source import check_source


def add_parser(commands: argparse._SubParsersAction) -> None:
    parser = commands.add_parser(
        "check",
        help="check each logged choice on a later extract (holds / weaker / not better, drift)",
        description="Refit every recoding in LOG on DATA with its numbers fixed and compare "
        "it with linear; measure each column's drift against the training deciles.",
    )
    parser.add_argument("log", metavar="LOG", help="recoding log (.json)")
    parser.add_argument(
        "data",
        metavar="DATA",
        help="the later extract: a file, PATH.duckdb, postgresql://... or spark:NAME",
    )
    add_source_options(parser)
    parser.add_argument("--format", choices=("table", "json"), default="table")
    parser.add_argument("--output", metavar="FILE", help="write here instead of stdout")
    parser.add_argument(
        "--strict", action="store_true", help="exit 1 when any recoding does not hold"
    )
    parser.add_argument(
        "--rename",
        action="append",
        default=[],
        type=_rename_pair,
        metavar="OLD=NEW",
        help="the log's column OLD is called NEW in DATA (repeatable)",
    )
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    for source in (args.log, local_path(args.data)):
        if args.output and same_file(args.output, source):
            raise InputProblem(f"--output {args.output} would overwrite {source}")
    log = recodings.load(args.log)
    source = opened_source(args)
    if source is not None:
        checks = check_source(log, source, dict(args.rename))
        return _write(args, checks, source.label)
    data = open_dataset(args.data, log.outcome_column, event_option(log.event))
    numeric = set(data.columns)
    for old, new in args.rename:
        if new not in data.column_names:
            raise InputProblem(f"--rename {old}={new}: {data.path.name} has no column {new!r}")
    renames = dict(args.rename)
    wanted = [renames.get(d.column, d.column) for d in log.decisions]
    lacking = [c for c in wanted if c not in data.column_names]
    if lacking:
        raise InputProblem(
            f"{data.path.name} lacks column(s) the log recodes: "
            f"{with_closest(lacking, data.column_names)}; a renamed column: --rename OLD=NEW"
        )
    not_numeric = [c for c in wanted if c not in numeric]
    if not_numeric:
        raise InputProblem(f"column(s) not numeric in {data.path.name}: {', '.join(not_numeric)}")

    def values_of(name: str):
        return data.values(name) if name in numeric else None

    return _write(args, check_log(log, values_of, data.outcome.y, renames), data.path.name)


def _write(args: argparse.Namespace, checks: list[ColumnCheck], name: str) -> int:
    text = as_json(checks) if args.format == "json" else as_table(checks, name)
    if args.output:
        atomic_write_text(args.output, text)
    else:
        sys.stdout.write(text)
    return 1 if args.strict and not all(c.holds for c in checks) else 0

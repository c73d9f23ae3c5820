"""``bendwise replay``: add every recoded column of a log to a data file."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

import pandas as pd

from tui.intake.readers import read_table
from tui.paths import check_output
from tui.problems import InputProblem
from tui.recodings.load import load
from tui.recodings.replay import apply_to_frame, check_columns, range_excess
from tui.recodings.table_out import WRITERS, check_writable, write_table


def add_parser(commands: argparse._SubParsersAction) -> None:
    parser = commands.add_parser(
        "replay",
        help="apply a recoding log to a data file",
        description="Read DATA, add every output column of the recoding log LOG (keeping all "
        "input columns), and write the result to OUT. Nothing is refitted: only the numbers "
        "in the log are used.",
    )
    parser.add_argument("log", metavar="LOG", help="recoding log (.json)")
    parser.add_argument("data", metavar="DATA", help="data file (csv, tsv, parquet, ...)")
    parser.add_argument(
        "--output",
        "-o",
        required=True,
        metavar="OUT",
        help=f"file to write; format by extension ({', '.join(sorted(WRITERS))})",
    )
    parser.add_argument(
        "--strict-range",
        action="store_true",
        help="refuse values outside a recoding's training range instead of warning",
    )
    parser.add_argument("--force", action="store_true", help="replace OUT if it exists")
    parser.add_argument(
        "--rename",
        action="append",
        default=[],
        type=_rename_pair,
        metavar="OLD=NEW",
        help="the data call the log's column OLD by the name NEW (repeatable); outputs keep "
        "the names in the log",
    )
    parser.set_defaults(run=run)


def _rename_pair(text: str) -> tuple[str, str]:
    old, sep, new = text.partition("=")
    if not sep or not old.strip() or not new.strip():
        raise argparse.ArgumentTypeError(f"--rename takes OLD=NEW, not {text!r}")
    return old.strip(), new.strip()


def _apply_renames(frame: pd.DataFrame, renames: list[tuple[str, str]], data: Path) -> pd.DataFrame:
    """Give renamed columns the log's names for the replay (and back afterwards)."""
    for old, new in renames:
        if new not in frame.columns:
            raise InputProblem(f"--rename {old}={new}: {data} has no column {new!r}")
        if old in frame.columns:
            raise InputProblem(f"--rename {old}={new}: {data} already has a column {old!r}")
    return frame.rename(columns={new: old for old, new in renames})


def run(args: argparse.Namespace) -> int:
    out, data, log_path = Path(args.output), Path(args.data), Path(args.log)
    # Every check that can refuse comes before the first byte is written.
    check_output(out, [("data file", data), ("recoding log", log_path)], args.force)
    check_writable(out)
    log = load(log_path)
    frame = _apply_renames(read_table(data), args.rename, data)
    check_columns(log, frame, str(data))
    excess = range_excess(log, frame)
    if excess and args.strict_range:
        shown = "; ".join(e.describe() for e in excess)
        raise InputProblem(f"values outside the training range (--strict-range): {shown}")
    for e in excess:
        sys.stderr.write(f"bendwise: warning: {e.describe()}\n")
    result = apply_to_frame(log, frame, str(data))
    result = result.rename(columns={old: new for old, new in args.rename})
    write_table(result, out)
    added = sum(len(d.outputs) for d in log.decisions)
    sys.stderr.write(
        f"bendwise: wrote {out}: {len(result)} rows, {added} column(s) added "
        f"by {len(log.decisions)} recoding(s)\n"
    )
    return 0

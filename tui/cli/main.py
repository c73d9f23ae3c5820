"""The ``bendwise`` command: parses arguments and hands off to one sub-command."""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence

from tui import __version__
from tui.cli import (
    check_cmd,
    diff_cmd,
    forms_cmd,
    replay_cmd,
    report_cmd,
    review_cmd,
    scan_cmd,
    sql_cmd,
)
from tui.problems import InputProblem


class _Parser(argparse.ArgumentParser):
    """Usage errors: one line and exit 2, without the usage block."""

    def error(self, message: str) -> None:  # type: ignore[override]
        sys.stderr.write(f"bendwise: {message} (see: {self.prog} --help)\n")
        sys.exit(2)


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="bendwise",
        description="Rank numeric predictors by evidence of non-linearity on the log-odds "
        "scale, review them, and replay the chosen recodings.",
    )
    parser.add_argument("--version", action="version", version=f"bendwise {__version__}")
    commands = parser.add_subparsers(dest="command", required=True, parser_class=_Parser)
    scan_cmd.add_parser(commands)
    review_cmd.add_parser(commands)
    replay_cmd.add_parser(commands)
    sql_cmd.add_parser(commands)
    report_cmd.add_parser(commands)
    diff_cmd.add_parser(commands)
    forms_cmd.add_parser(commands)
    check_cmd.add_parser(commands)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point; returns the exit code."""
    args = build_parser().parse_args(argv)
    try:
        return int(args.run(args) or 0)
    except InputProblem as problem:
        sys.stderr.write(f"bendwise: {problem}\n")
        return 2
    except KeyboardInterrupt:
        sys.stderr.write("bendwise: interrupted\n")
        return 130
    except BrokenPipeError:
        return 0


if __name__ == "__main__":
    sys.exit(main())

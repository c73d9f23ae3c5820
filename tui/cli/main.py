"""The ``bendwise`` command: parses arguments and hands off to one sub-command."""

from __future__ import annotations

import argparse
import importlib
import sys
from collections.abc import Sequence

from tui import __version__
from tui.problems import InputProblem

COMMANDS = {
    "scan": "scan_cmd",
    "review": "review_cmd",
    "replay": "replay_cmd",
    "sql": "sql_cmd",
    "report": "report_cmd",
    "diff": "diff_cmd",
    "forms": "forms_cmd",
    "check": "check_cmd",
}
"""Sub-commands in the order of the help text, and the module of each."""


class _Parser(argparse.ArgumentParser):
    """Usage errors: one line and exit 2, without the usage block."""

    def error(self, message: str) -> None:  # type: ignore[override]
        sys.stderr.write(f"bendwise: {message} (see: {self.prog} --help)\n")
        sys.exit(2)


def build_parser(only: str | None = None) -> argparse.ArgumentParser:
    """The whole parser, or (``only``) one sub-command's: a run imports only what its
    command needs (the others' modules pull in the app, the report and the replay)."""
    parser = _Parser(
        prog="bendwise",
        description="Rank numeric predictors by evidence of non-linearity on the log-odds "
        "scale, review them, and replay the chosen recodings.",
    )
    parser.add_argument("--version", action="version", version=f"bendwise {__version__}")
    commands = parser.add_subparsers(dest="command", required=True, parser_class=_Parser)
    for name, module in COMMANDS.items():
        if only is None or name == only:
            importlib.import_module(f"tui.cli.{module}").add_parser(commands)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point; returns the exit code."""
    argv = list(sys.argv[1:] if argv is None else argv)
    only = argv[0] if argv and argv[0] in COMMANDS else None
    args = build_parser(only).parse_args(argv)
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

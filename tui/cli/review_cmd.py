"""``bendwise review``: the keyboard-driven review of every numeric column."""

from __future__ import annotations

import argparse
from typing import TYPE_CHECKING

from tui.cli.common import add_adjust_options, add_data_options, add_fit_options
from tui.cli.source_options import add_source_options, fetched, reduced
from tui.engine.scan import ScanSettings
from tui.recodings.lock import release_on_hangup

if TYPE_CHECKING:
    from tui.app.session import ReviewSession


def add_parser(commands: argparse._SubParsersAction) -> None:
    parser = commands.add_parser(
        "review",
        help="review columns one by one and record a form for each",
        description="Scan every numeric column, then review them worst first: the "
        "empirical logits with candidate forms, a decision per column, each saved at once "
        "to the recoding log.",
    )
    add_data_options(parser)
    add_fit_options(parser)
    add_adjust_options(parser)  # covariates' forms come from --log, the review's own log
    add_source_options(parser)
    parser.add_argument(
        "--log",
        metavar="LOG",
        help="recoding log to read and write (default: <data stem>.recodings.json here)",
    )
    parser.add_argument(
        "--read-only",
        action="store_true",
        help="browse without recording decisions (and without taking the log's lock)",
    )
    parser.add_argument(
        "--take-over",
        action="store_true",
        help="take the log's lock from a review on another machine that has ended",
    )
    parser.add_argument(
        "--analyst",
        metavar="NAME",
        help="name recorded as decided_by (default: your login name)",
    )
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    # Textual loads only when the review starts, so other commands stay quick.
    from tui.app.app import ReviewApp

    settings = ScanSettings(groups=args.groups, knots=args.knots)
    restore = release_on_hangup()  # set before the lock is taken: a hang-up leaves none
    try:
        session = _source_session(args, settings) or _file_session(args, settings)
        try:
            ReviewApp(session).run()
        finally:
            session.book.close()  # the lock goes; every decision is already saved
    finally:
        restore()
    return 0


def _source_session(args: argparse.Namespace, settings: ScanSettings) -> ReviewSession | None:
    """A review of a source: its counts, or with --adjust/--weight its rows under
    --row-cap; None when DATA is a file."""
    from tui.app.source_session import open_source_session
    from tui.engine.reduced_data import record_of
    from tui.intake.sources import local_path

    rows = [*args.adjust, *([args.weight] if args.weight else [])]
    common = dict(
        log_path=args.log,
        settings=settings,
        read_only=args.read_only,
        take_over=args.take_over,
        analyst=args.analyst,
        data_path=local_path(args.data),
    )
    if not rows:
        data = reduced(args, args.outcome, args.event, None, args.exclude)
        return None if data is None else open_source_session(data, data.source_info(), **common)
    got = fetched(args, rows)
    if got is None:
        return None
    dataset, source = got
    try:
        record = record_of(source, args.outcome, args.event)
    finally:
        source.close()
    return open_source_session(
        dataset, record, adjust=args.adjust, weight=args.weight, weight_kind=args.weight_kind,
        **common,
    )  # fmt: skip


def _file_session(args: argparse.Namespace, settings: ScanSettings) -> ReviewSession:
    from tui.app.session import open_session

    return open_session(
        args.data,
        args.outcome,
        args.event,
        args.exclude,
        args.log,
        settings,
        adjust=args.adjust,
        weight=args.weight,
        weight_kind=args.weight_kind,
        read_only=args.read_only,
        take_over=args.take_over,
        analyst=args.analyst,
    )

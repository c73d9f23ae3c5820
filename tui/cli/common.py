"""Options shared by the sub-commands that read a data file."""

from __future__ import annotations

import argparse

from tui.engine.forms.spline import DEFAULT_KNOTS, KNOT_PERCENTILES
from tui.engine.groups import MAX_GROUPS, MIN_GROUPS
from tui.intake.weights import FREQUENCY, WEIGHT_KINDS


def column_list(text: str) -> list[str]:
    """Comma-separated column names."""
    return [part.strip() for part in text.split(",") if part.strip()]


def group_count(text: str) -> int:
    value = int(text) if text.isdigit() else -1
    if not MIN_GROUPS <= value <= MAX_GROUPS:
        raise argparse.ArgumentTypeError(
            f"groups must be a whole number from {MIN_GROUPS} to {MAX_GROUPS}, not {text!r}"
        )
    return value


def knot_count(text: str) -> int:
    value = int(text) if text.isdigit() else -1
    if value not in KNOT_PERCENTILES:
        raise argparse.ArgumentTypeError(f"knots must be 3 to 7, not {text!r}")
    return value


def add_data_options(parser: argparse.ArgumentParser) -> None:
    """DATA, --outcome, --event and --exclude."""
    parser.add_argument("data", metavar="DATA", help="data file (csv, tsv, parquet, ...)")
    parser.add_argument("--outcome", required=True, metavar="COL", help="binary outcome column")
    parser.add_argument(
        "--event", metavar="VALUE", help="outcome value that counts as the event (text outcomes)"
    )
    parser.add_argument(
        "--exclude",
        type=column_list,
        default=[],
        metavar="C1,C2",
        help="columns to leave out of the scan",
    )


def add_fit_options(parser: argparse.ArgumentParser) -> None:
    """--groups and --knots."""
    parser.add_argument(
        "--groups",
        type=group_count,
        default=4,
        metavar="G",
        help="quantile groups (4-20, default 4)",
    )
    parser.add_argument(
        "--knots",
        type=knot_count,
        default=DEFAULT_KNOTS,
        metavar="K",
        help=f"knots of the scoring spline (3-7, default {DEFAULT_KNOTS})",
    )


def add_adjust_options(parser: argparse.ArgumentParser, forms_from_log: bool = False) -> None:
    """--adjust, --weight and --weight-kind (and --log for covariates' accepted forms)."""
    parser.add_argument(
        "--adjust",
        type=column_list,
        default=[],
        metavar="C1,C2",
        help="covariates in every fit: numeric (linear, or their accepted form in the log) "
        "or text with at most 10 levels (0/1 indicators)",
    )
    parser.add_argument("--weight", metavar="COL", help="row weights used in every fit")
    parser.add_argument(
        "--weight-kind",
        choices=WEIGHT_KINDS,
        default=FREQUENCY,
        help="frequency: each row stands for w rows; survey: sampling weights, rescaled "
        "to average 1 (scores by robust Wald; the table's LR p only approximate)",
    )
    if forms_from_log:
        parser.add_argument(
            "--log",
            metavar="LOG",
            help="recoding log whose accepted forms the --adjust covariates enter in",
        )

"""The recoding log: a versioned JSON file of accepted recodings, and two ways to replay it.

A modelling script needs only this package::

    from tui import recodings

    log = recodings.load("cohort.recodings.json")         # checked against the schema
    fresh = recodings.apply_to_frame(log, frame)          # adds every output column
    print(recodings.to_sql(log, dialect="postgres", table="cohort"))
"""

from tui.recodings.errors import LogProblem
from tui.recodings.load import load, loads, schema, validate
from tui.recodings.model import (
    FORMAT,
    FORMAT_VERSION,
    Decision,
    RecodingLog,
    SetAside,
    SourceInfo,
    output_names,
)
from tui.recodings.replay import RangeExcess, apply_to_frame, check_columns, range_excess
from tui.recodings.save import dumps, save
from tui.recodings.sql import DIALECTS, to_sql

# Older names of load and save, kept for scripts that use them.
load_log = load
save_log = save

__all__ = [
    "DIALECTS",
    "FORMAT",
    "FORMAT_VERSION",
    "Decision",
    "LogProblem",
    "RangeExcess",
    "RecodingLog",
    "SetAside",
    "SourceInfo",
    "apply_to_frame",
    "check_columns",
    "dumps",
    "load",
    "load_log",
    "loads",
    "output_names",
    "range_excess",
    "save",
    "save_log",
    "schema",
    "to_sql",
    "validate",
]

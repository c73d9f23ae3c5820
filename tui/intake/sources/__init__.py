"""Data where it lives: tables and queries in DuckDB, PostgreSQL and Spark, reduced to
counts inside their engine (see ``reduce.py``). ``open_source`` picks the engine."""

from tui.intake.sources.base import (
    BinPlan,
    OtherColumn,
    PushedColumn,
    Source,
    SourceColumn,
    SourceOutcome,
)

__all__ = ["BinPlan", "OtherColumn", "PushedColumn", "Source", "SourceColumn", "SourceOutcome"]

"""Data where it lives: tables and queries in DuckDB, PostgreSQL and Spark, reduced to
counts inside their engine (see ``reduce.py``). ``open_source`` picks the engine."""

from tui.intake.sources.base import (
    BinPlan,
    OtherColumn,
    PushedColumn,
    Source,
    SourceColumn,
    SourceOrigin,
    SourceOutcome,
)

__all__ = [
    "open_source",
    "BinPlan",
    "OtherColumn",
    "PushedColumn",
    "Source",
    "SourceColumn",
    "SourceOrigin",
    "SourceOutcome",
]


def open_source(
    data: str,
    table: str | None = None,
    query: str | None = None,
    engine: str | None = None,
    spark_master: str | None = None,
) -> Source | None:
    """The source DATA names, or None for a plain file read by pandas.

    ``PATH.duckdb`` (with a table or query), ``postgresql://USER@HOST:PORT/DBNAME`` (with
    a table or query), ``spark:NAME``, or a CSV/Parquet file with ``engine="duckdb"``.
    """
    from tui.intake.sources.postgres_url import is_postgres_url
    from tui.problems import InputProblem

    database = data.lower().endswith(".duckdb") or is_postgres_url(data)
    if database and (table is None) == (query is None):
        raise InputProblem(f"{_shown(data)} is a database: name --table NAME or --query SQL")
    if not database and (table is not None or query is not None):
        raise InputProblem("--table and --query go with a database (PATH.duckdb or a URL)")
    if data.lower().endswith(".duckdb"):
        from tui.intake.sources.duckdb_source import open_duckdb_database

        return open_duckdb_database(data, table, query)
    if is_postgres_url(data):
        from tui.intake.sources.postgres_source import PostgresSource

        return PostgresSource(data, table, query)
    if data.startswith("spark:"):
        from tui.intake.sources.spark_source import SparkSource

        if not data[len("spark:") :]:
            raise InputProblem("spark: needs a table name or a Parquet path (spark:NAME)")
        return SparkSource(data[len("spark:") :], spark_master)
    if engine == "duckdb":
        from tui.intake.sources.duckdb_source import open_file_through_duckdb

        return open_file_through_duckdb(data)
    return None


def local_path(data: str) -> str:
    """The file on this machine that DATA reads (a DuckDB database, a file through DuckDB,
    a Parquet path given to Spark), for the check that no output is written over it; a
    database URL or a catalog table gives a path that does not exist."""
    return data[len("spark:") :] if data.startswith("spark:") else data


def _shown(data: str) -> str:
    from tui.intake.sources.postgres_url import is_postgres_url, redacted

    return redacted(data) if is_postgres_url(data) else data

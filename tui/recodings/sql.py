"""The recoding log as one SQL SELECT that computes every output inside the database.

Each kind renders its own expressions (``Kind.sql``) from an x expression; this module
adds what differs between databases: identifier quoting, the name of the double type, and
one cast of every source column and output to that type, so that integer columns, decimal
literals (``1.0`` is DECIMAL in DuckDB and Spark, NUMERIC in PostgreSQL) and the database's
own arithmetic rules cannot change a result. LN, POWER, GREATEST and LEAST exist in all
three dialects.

Python replay treats NULL, NaN and ±infinity in x alike, as missing. Databases keep NaN and
infinities as values, so every output is NULL unless x is one of the finite doubles; a
recoding with a missing-value fill puts the fill in place of every other x (the same test
decides), and its indicator is 1 exactly there. The
test compares x with the three special values: all three dialects treat NaN as equal to
itself, so ``NOT IN`` catches it, and NULL x makes the test NULL, hence a NULL output.

With a view name the SELECT is wrapped in ``CREATE OR REPLACE VIEW``, which all three dialects
accept, so the statement can be run again after the log is re-exported. PostgreSQL replaces a view
only when the new one keeps the old one's columns (names, order, types) and adds any new ones at
the end; a log whose outputs changed otherwise needs ``DROP VIEW`` first. PostgreSQL also expands
``*`` when the view is created, so columns added to the table later do not appear in the view
until the statement is run again; DuckDB and Spark keep the query text and expand ``*`` on use.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import PurePath

from tui.recodings.model import RecodingLog


@dataclass(frozen=True)
class Dialect:
    """What one database needs spelled its own way."""

    name: str
    """Key used on the command line."""
    quote: str
    """Character that quotes identifiers (doubled inside a name)."""
    double: str
    """Name of the 64-bit floating-point type."""
    create_view: str = "CREATE OR REPLACE VIEW"
    """How a view is made; every dialect here can replace one (see the module notes)."""
    view_name_refuses: str = ""
    """Characters the database's catalog cannot hold in a view name, even quoted."""

    def identifier(self, name: str) -> str:
        """``name`` quoted, so any column name is read as written (case, spaces, quotes)."""
        q = self.quote
        return q + name.replace(q, q + q) + q

    def as_double(self, expr: str) -> str:
        """``expr`` cast to the double type."""
        return f"CAST({expr} AS {self.double})"

    def is_finite(self, expr: str) -> str:
        """True for a finite double, false for NaN and ±infinity, NULL for NULL."""
        special = ", ".join(self.as_double(f"'{v}'") for v in ("NaN", "Infinity", "-Infinity"))
        return f"{expr} NOT IN ({special})"


DIALECTS: dict[str, Dialect] = {
    "duckdb": Dialect("duckdb", '"', "DOUBLE"),
    "postgres": Dialect("postgres", '"', "DOUBLE PRECISION"),
    # Spark rejects a backtick in the name of a view it stores, however it is quoted
    # (INVALID_ATTRIBUTE_NAME_SYNTAX); columns and temporary views may hold one. Its built-in
    # session catalog further allows only letters, digits and _ there; other catalogs differ,
    # so that is left to Spark to say.
    "spark": Dialect("spark", "`", "DOUBLE", view_name_refuses="`"),
}


def table_reference(table: str, dialect: Dialect, what: str = "table") -> str:
    """A table (or view) name, each dot-separated part quoted (``schema.table`` stays qualified)."""
    parts = table.split(".")
    if not table or any(not p or not p.isprintable() for p in parts):
        raise ValueError(f"{what} name {table!r} must be non-empty parts separated by dots")
    return ".".join(dialect.identifier(p) for p in parts)


def _comment(text: str) -> str:
    """Text safe inside a ``--`` comment: a line break there would end it early."""
    return "".join(ch if ch.isprintable() else "?" for ch in text)


def default_table(log: RecodingLog) -> str:
    """The training file's name without its extension (``data`` if that leaves nothing)."""
    return PurePath(log.source.name).stem or "data"


def to_sql(
    log: RecodingLog, dialect: str = "duckdb", table: str | None = None, view: str | None = None
) -> str:
    """``SELECT *, <expression> AS <output>, ... FROM <table>`` for every output of the log.

    No trailing semicolon, so the text can sit inside a view or a subquery as it is. With
    ``view`` (optionally ``schema.view``), the dialect's ``CREATE ... VIEW <view> AS`` statement
    around that SELECT instead, ended by a semicolon so it runs as pasted into a shell.
    """
    if dialect not in DIALECTS:
        raise ValueError(f"unknown SQL dialect {dialect!r}; known: {', '.join(DIALECTS)}")
    d = DIALECTS[dialect]
    source = table_reference(table if table is not None else default_table(log), d)
    target = None if view is None else table_reference(view, d, "view")
    refused = [ch for ch in d.view_name_refuses if view is not None and ch in view]
    if refused:
        raise ValueError(f"view name {view!r}: {d.name} cannot hold {refused[0]!r} in a view name")
    if target == source:
        raise ValueError(f"view name {view!r} is the table it reads; choose another name")
    lines = [
        f"-- bendwise recodings for outcome {_comment(log.outcome_column)}, learned on "
        f"{_comment(log.source.name)} ({log.source.rows} rows, "
        f"sha256 {_comment(log.source.sha256[:12])}...)",
        f"-- dialect: {d.name}; a missing x (NULL, NaN, infinite) gives NULL outputs"
        + (
            " unless its recoding fills it"
            if any(dd.recoding.missing for dd in log.decisions)
            else ""
        ),
    ]
    if target is not None:
        lines.append(f"{d.create_view} {target} AS")
    lines.append("SELECT")
    columns = ["  *"]
    for decision in log.decisions:
        x = d.as_double(d.identifier(decision.column))
        finite = d.is_finite(x)
        exprs = decision.recoding.sql(x, d.name, finite)
        comment = f"  -- {_comment(decision.column)}: {decision.recoding.describe()}"
        for i, (name, expr) in enumerate(zip(decision.outputs, exprs, strict=True)):
            # A filled recoding has already replaced every missing x by its fill.
            filled = decision.recoding.missing is not None
            guarded = expr if filled else f"CASE WHEN {finite} THEN {expr} END"
            item = f"  {d.as_double(guarded)} AS {d.identifier(name)}"
            columns.append(f"{comment}\n{item}" if i == 0 else item)
    lines.append(",\n".join(columns))
    lines.append(f"FROM {source}" + ("" if target is None else ";"))
    return "\n".join(lines) + "\n"

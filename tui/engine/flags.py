"""Words that warn about a column before its score is trusted."""

from __future__ import annotations

CONSTANT = "constant"
BINARY = "binary"
FEW_VALUES = "few-values"
MANY_MISSING = "many-missing"
IDENTIFIER_LIKE = "identifier-like"
NON_FINITE = "non-finite"
SEPARATION = "separation"
NOT_CONVERGED = "not-converged"
LOW_EVENTS = "low-events"
NONPOSITIVE = "nonpositive"
NOT_NUMERIC = "not-numeric"
"""Listed so that no column is silently dropped; never scored."""

FLAGS = (
    CONSTANT,
    BINARY,
    FEW_VALUES,
    MANY_MISSING,
    IDENTIFIER_LIKE,
    NON_FINITE,
    SEPARATION,
    NOT_CONVERGED,
    LOW_EVENTS,
    NONPOSITIVE,
    NOT_NUMERIC,
)

FEW_VALUES_BELOW = 10
"""Fewer distinct values than this: quantile groups and knots tie."""
MANY_MISSING_SHARE = 0.20
"""More than this share of rows missing: the complete rows may not represent the rest."""
IDENTIFIER_SHARE = 0.95
"""Whole numbers, nearly all distinct: probably a row or record number."""


def profile_flags(
    rows: int, n: int, distinct: int, nonfinite: int, integer_valued: bool, minimum: float | None
) -> list[str]:
    """Flags that follow from the column's values alone (before any fit)."""
    flags: list[str] = []
    if distinct <= 1:
        flags.append(CONSTANT)
    elif distinct == 2:
        flags.append(BINARY)
    elif distinct < FEW_VALUES_BELOW:
        flags.append(FEW_VALUES)
    if rows and (rows - n) / rows > MANY_MISSING_SHARE:
        flags.append(MANY_MISSING)
    if integer_valued and n >= 20 and distinct >= IDENTIFIER_SHARE * n:
        flags.append(IDENTIFIER_LIKE)
    if nonfinite:
        flags.append(NON_FINITE)
    if minimum is not None and minimum <= 0 and distinct > 2:
        flags.append(NONPOSITIVE)
    return flags

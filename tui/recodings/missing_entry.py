"""The optional ``missing`` key of a recoding entry: a fill value and an indicator name.

``{"fill": NUMBER}`` replaces a missing or non-finite x by NUMBER before the clip and the
kind apply; ``{"fill": NUMBER, "indicator": NAME}`` adds the output NAME, 1 where x was
missing and 0 otherwise, listed last in ``outputs``. The schema has already checked the
types (a fill is required, no other keys); what is checked here is where the indicator
sits among the outputs.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

from tui.engine.forms.base import MissingFill
from tui.recodings.errors import EntryProblem
from tui.recodings.model import Decision


def missing_entry(decision: Decision, where: str) -> dict[str, Any]:
    """The ``missing`` object written for ``decision`` (which has a fill)."""
    rule = decision.recoding.missing
    assert rule is not None
    fill = float(rule.fill)
    if not math.isfinite(fill):
        raise ValueError(f"{where}.fill: {fill!r} cannot be written; numbers must be finite")
    entry: dict[str, Any] = {"fill": fill}
    if rule.indicator:
        entry["indicator"] = decision.outputs[-1]
    return entry


def missing_fill(item: Mapping[str, Any] | None) -> MissingFill | None:
    """The fill a schema-valid ``missing`` object holds (None when the key is absent)."""
    if item is None:
        return None
    return MissingFill(fill=item["fill"], indicator="indicator" in item)


def check_indicator(
    item: Mapping[str, Any] | None, outputs: tuple[str, ...], column: str, where: str
) -> None:
    """The indicator is named last in ``outputs`` and is not the source column."""
    if item is None or "indicator" not in item:
        return
    name = item["indicator"]
    if name == column:
        raise EntryProblem(where, f"'{name}' clashes with the source column it flags")
    if name in outputs[:-1]:
        raise EntryProblem(where, f"'{name}' clashes with an output of the form")
    if outputs[-1] != name:
        raise EntryProblem(
            where,
            f"'{name}' must be the last name in outputs (it follows the form's own outputs), "
            f"not '{outputs[-1]}'",
        )

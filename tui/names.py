"""Name matching for messages: "column 'hieght' not found (closest: height)"."""

from __future__ import annotations

import difflib
from collections.abc import Iterable


def closest_names(name: str, choices: Iterable[str], limit: int = 3) -> list[str]:
    """Up to ``limit`` names from ``choices`` that look like ``name`` (case ignored), best first."""
    by_lower: dict[str, str] = {}
    for choice in choices:
        by_lower.setdefault(str(choice).lower(), str(choice))
    found = difflib.get_close_matches(name.lower(), list(by_lower), n=limit, cutoff=0.6)
    return [by_lower[key] for key in found]


def with_closest(names: Iterable[str], choices: Iterable[str]) -> str:
    """``names`` joined for a message, each followed by the closest of ``choices`` when one
    looks like it: a renamed column is then named where it is missed."""
    present = list(choices)
    parts = []
    for name in names:
        near = closest_names(name, present, limit=1)
        parts.append(f"{name} (closest: {near[0]})" if near else name)
    return ", ".join(parts)


SHOWN_CHARS = 60
"""Longest name a message repeats in full; longer ones are cut (a name can be any length)."""


def shown_name(name: str) -> str:
    """``name`` quoted for a message, cut to ``SHOWN_CHARS`` with its length when longer."""
    text = str(name)
    if len(text) <= SHOWN_CHARS:
        return f"'{text}'"
    return f"'{text[:SHOWN_CHARS]}…' ({len(text)} characters)"

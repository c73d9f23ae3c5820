"""The recoding log as a JSON document and back, with the checks a schema cannot express.

``to_document`` gives plain JSON values in a fixed key order. ``from_document`` expects a
document that already passed the schema (see ``load.py``) and checks the rest: numbers each
kind can apply, one output name per output, names unique across the log, one entry per
column, ISO 8601 times.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from datetime import datetime
from typing import Any

import numpy as np

from tui import __version__
from tui.engine.forms.base import RecodingError
from tui.engine.forms.registry import make_recoding
from tui.recodings.errors import EntryProblem
from tui.recodings.evidence import Evidence
from tui.recodings.missing_entry import check_indicator, missing_entry, missing_fill
from tui.recodings.model import (
    FORMAT,
    FORMAT_VERSION,
    Decision,
    EngineInfo,
    RecodingLog,
    SetAside,
    SourceInfo,
)

# RecodingError messages start with the field they blame ("params.knots must be ...").
_BLAMED_FIELD = re.compile(
    r"^(params(?:\.\w+)?(?:\[\d+\])?|clip|kind|missing\.\w+)\s+(.*)$", re.DOTALL
)


def to_document(log: RecodingLog) -> dict[str, Any]:
    """The log as plain JSON values, keys in the documented order."""
    return {
        "format": FORMAT,
        "format_version": FORMAT_VERSION,
        # The program that writes the file, not whichever version wrote it first.
        "written_by": f"bendwise {__version__}",
        "outcome": {"column": log.outcome_column, "event": plain(log.event, "outcome.event")},
        "source": {
            "name": log.source.name,
            "rows": int(log.source.rows),
            "sha256": log.source.sha256,
            **_engine_entry(log.source.engine),
        },
        "recodings": [_decision_entry(d, i) for i, d in enumerate(log.decisions)],
        "set_aside": [
            {"column": s.column, "note": s.note, "decided_at": s.decided_at, **_by(s.decided_by)}
            for s in log.set_aside
        ],
    }


def _decision_entry(decision: Decision, index: int) -> dict[str, Any]:
    where = f"recodings[{index}]"
    recoding = decision.recoding
    entry: dict[str, Any] = {
        "column": decision.column,
        "kind": recoding.kind,
        "params": plain(dict(recoding.params), f"{where}.params"),
    }
    if recoding.clip is not None:
        entry["clip"] = [float(recoding.clip[0]), float(recoding.clip[1])]
    if recoding.missing is not None:
        entry["missing"] = missing_entry(decision, f"{where}.missing")
    entry.update(
        outputs=list(decision.outputs),
        range=[float(decision.range[0]), float(decision.range[1])],
    )
    if decision.deciles is not None:
        entry["deciles"] = [float(v) for v in decision.deciles]
    entry.update(
        note=decision.note,
        decided_at=decision.decided_at,
        **_by(decision.decided_by),
        # Evidence is a record of what was shown; a number that could not be computed
        # (NaN) is written as null rather than refused.
        evidence=plain(decision.evidence.to_json(), f"{where}.evidence", missing_as_null=True),
    )
    return entry


def _by(who: str | None) -> dict[str, str]:
    """``decided_by`` when recorded; a log that did not record it is written without it."""
    return {} if who is None else {"decided_by": who}


def plain(value: Any, where: str, missing_as_null: bool = False) -> Any:
    """``value`` as JSON types: numpy scalars unwrapped, tuples as lists, dict keys sorted.

    Non-finite numbers raise ValueError, or become None when ``missing_as_null``.
    """
    if isinstance(value, Mapping):
        return {
            str(k): plain(value[k], f"{where}.{k}", missing_as_null) for k in sorted(value, key=str)
        }
    if isinstance(value, list | tuple | np.ndarray):
        return [plain(v, f"{where}[{i}]", missing_as_null) for i, v in enumerate(value)]
    if isinstance(value, np.generic):
        value = value.item()
    if value is None or isinstance(value, bool | str):
        return value
    if isinstance(value, int):
        return value
    if isinstance(value, float):
        if math.isfinite(value):
            return value
        if missing_as_null:
            return None
        raise ValueError(f"{where}: {value!r} cannot be written; numbers must be finite")
    raise TypeError(f"{where}: a {type(value).__name__} cannot be written to the log")


ENGINE_KEYS = ("engine", "host", "database", "table", "query_sha256", "rows", "fingerprint")
"""The keys of ``source.engine``, in the documented order (absent ones left out)."""


def _engine_entry(info: EngineInfo | None) -> dict[str, Any]:
    if info is None:
        return {}
    values = {k: getattr(info, k) for k in ENGINE_KEYS}
    return {"engine": {k: v for k, v in values.items() if v is not None}}


def _engine(entry: Mapping[str, Any] | None) -> EngineInfo | None:
    return None if entry is None else EngineInfo(**entry)


def from_document(document: Mapping[str, Any]) -> RecodingLog:
    """The log held by a schema-valid document; raises EntryProblem naming the entry."""
    outcome, source = document["outcome"], document["source"]
    set_aside = tuple(
        SetAside(
            column=item["column"],
            note=item["note"],
            decided_at=_timestamp(item["decided_at"], f"set_aside[{i}].decided_at"),
            decided_by=item.get("decided_by"),
        )
        for i, item in enumerate(document.get("set_aside", []))
    )
    decisions = tuple(_decision(item, i) for i, item in enumerate(document["recodings"]))
    _check_names(outcome["column"], decisions, set_aside)
    return RecodingLog(
        outcome_column=outcome["column"],
        event=outcome["event"],
        source=SourceInfo(
            name=source["name"],
            rows=source["rows"],
            sha256=source["sha256"],
            engine=_engine(source.get("engine")),
        ),
        decisions=decisions,
        set_aside=set_aside,
        written_by=document["written_by"],
    )


def _decision(item: Mapping[str, Any], index: int) -> Decision:
    where = f"recodings[{index}]"
    clip = item.get("clip")
    try:
        recoding = make_recoding(
            item["kind"],
            dict(item["params"]),
            None if clip is None else (float(clip[0]), float(clip[1])),
            missing_fill(item.get("missing")),
        )
        recoding.validate()
    except RecodingError as problem:
        found = _BLAMED_FIELD.match(str(problem))
        if found:
            raise EntryProblem(f"{where}.{found[1]}", found[2]) from None
        raise EntryProblem(f"{where}.params", str(problem)) from None
    outputs = tuple(item["outputs"])
    expected = len(recoding.suffixes())
    if len(outputs) != expected:
        raise EntryProblem(
            f"{where}.outputs",
            f"{recoding.describe()} gives {expected} output(s) but {len(outputs)} are named",
        )
    check_indicator(item.get("missing"), outputs, item["column"], f"{where}.missing.indicator")
    low, high = (float(v) for v in item["range"])
    if low > high:
        raise EntryProblem(f"{where}.range", f"training minimum {low} exceeds maximum {high}")
    deciles = item.get("deciles")
    if deciles is not None:
        deciles = tuple(float(v) for v in deciles)
        if any(b < a for a, b in zip(deciles, deciles[1:], strict=False)):
            raise EntryProblem(f"{where}.deciles", "must be in ascending order")
    return Decision(
        column=item["column"],
        recoding=recoding,
        outputs=outputs,
        range=(low, high),
        deciles=deciles,
        note=item["note"],
        decided_at=_timestamp(item["decided_at"], f"{where}.decided_at"),
        decided_by=item.get("decided_by"),
        evidence=Evidence.from_json(item["evidence"], f"{where}.evidence"),
    )


def _timestamp(text: str, where: str) -> str:
    try:
        datetime.fromisoformat(text)
    except ValueError:
        raise EntryProblem(where, f"{text!r} is not an ISO 8601 date and time") from None
    return text


def _check_names(
    outcome: str, decisions: tuple[Decision, ...], set_aside: tuple[SetAside, ...]
) -> None:
    """One entry per column; every output name new, unique, and not a source column."""
    owner: dict[str, str] = {outcome: "the outcome column"}
    for i, entry in enumerate(set_aside):
        if entry.column in owner:
            raise EntryProblem(
                f"set_aside[{i}].column", f"'{entry.column}' is already {owner[entry.column]}"
            )
        owner[entry.column] = f"the column set aside at set_aside[{i}]"
    for i, d in enumerate(decisions):
        if d.column in owner:
            raise EntryProblem(
                f"recodings[{i}].column", f"'{d.column}' is already {owner[d.column]}"
            )
        owner[d.column] = f"the column recoded at recodings[{i}]"
    for i, d in enumerate(decisions):
        for j, name in enumerate(d.outputs):
            if name in owner:
                raise EntryProblem(
                    f"recodings[{i}].outputs[{j}]", f"'{name}' is already {owner[name]}"
                )
            owner[name] = f"an output of recodings[{i}]"

"""What changed between two recoding logs, for the review of a model update.

Logs are compared as the documents ``save`` writes, entry by entry and by column (the order
of entries does not matter). Every key of a recoding entry counts except the record of who
decided, when and why (``RECORD_KEYS``), so a key that changes what replay does (kind,
params, clip, outputs, range, missing-value handling...) is compared as soon as the log
holds it. Set-aside columns are compared by name. Numbers compare by value (``1`` equals
``1.0``), never with a tolerance: a knot moved by any amount is a change.
"""

from __future__ import annotations

import json
import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from tui.recodings.codec import to_document
from tui.recodings.load import load
from tui.recodings.model import RecodingLog

RECORD_KEYS = frozenset({"column", "note", "decided_at", "decided_by", "evidence"})
"""Keys of a recoding entry that record the decision rather than define the recoding."""

_LOG_SKIPPED = frozenset({"format", "format_version", "written_by", "recodings", "set_aside"})


@dataclass(frozen=True)
class Change:
    """One value that differs; ``None`` stands for a key the log does not have."""

    field: str
    """Dotted key, e.g. ``params.knots`` or ``source.sha256``."""
    old: Any
    new: Any

    def as_record(self) -> dict[str, Any]:
        return {"field": self.field, "old": self.old, "new": self.new}


@dataclass(frozen=True)
class ChangedRecoding:
    """A column recoded in both logs, differently."""

    column: str
    changes: tuple[Change, ...]


@dataclass(frozen=True)
class LogDiff:
    """Everything that differs between an old log and a new one."""

    log: tuple[Change, ...] = ()
    """Outcome and training-data fingerprint."""
    added: tuple[Mapping[str, Any], ...] = ()
    """Recodings only in the new log (their compared keys)."""
    removed: tuple[Mapping[str, Any], ...] = ()
    """Recodings only in the old log."""
    changed: tuple[ChangedRecoding, ...] = ()
    """Columns recoded in both, differently."""
    set_aside_added: tuple[str, ...] = ()
    set_aside_removed: tuple[str, ...] = ()

    @property
    def equal(self) -> bool:
        """Whether nothing compared differs."""
        return not (
            self.log
            or self.added
            or self.removed
            or self.changed
            or self.set_aside_added
            or self.set_aside_removed
        )

    def as_record(self) -> dict[str, Any]:
        """Plain JSON values (see ``as_json``)."""
        return {
            "equal": self.equal,
            "log": [c.as_record() for c in self.log],
            "recodings": {
                "added": [dict(entry) for entry in self.added],
                "removed": [dict(entry) for entry in self.removed],
                "changed": [
                    {"column": c.column, "changes": [x.as_record() for x in c.changes]}
                    for c in self.changed
                ],
            },
            "set_aside": {
                "added": list(self.set_aside_added),
                "removed": list(self.set_aside_removed),
            },
            "not_compared": sorted(RECORD_KEYS - {"column"}),
        }


def diff_logs(old: RecodingLog, new: RecodingLog) -> LogDiff:
    """The differences from ``old`` to ``new``."""
    return diff_documents(to_document(old), to_document(new))


def diff_documents(old_doc: Mapping[str, Any], new_doc: Mapping[str, Any]) -> LogDiff:
    """The differences between two log documents (as ``codec.to_document`` gives them)."""
    header = _changes(
        {k: v for k, v in old_doc.items() if k not in _LOG_SKIPPED},
        {k: v for k, v in new_doc.items() if k not in _LOG_SKIPPED},
    )
    before = {e["column"]: _compared(e) for e in old_doc["recodings"]}
    after = {e["column"]: _compared(e) for e in new_doc["recodings"]}
    changed = []
    for column, entry in before.items():
        if column in after:
            changes = _changes(entry, after[column])
            if changes:
                changed.append(ChangedRecoding(column, tuple(changes)))
    old_aside = [s["column"] for s in old_doc["set_aside"]]
    new_aside = [s["column"] for s in new_doc["set_aside"]]
    return LogDiff(
        log=tuple(header),
        added=tuple({"column": c, **e} for c, e in after.items() if c not in before),
        removed=tuple({"column": c, **e} for c, e in before.items() if c not in after),
        changed=tuple(changed),
        set_aside_added=tuple(c for c in new_aside if c not in old_aside),
        set_aside_removed=tuple(c for c in old_aside if c not in new_aside),
    )


def diff_files(old: str | os.PathLike[str], new: str | os.PathLike[str]) -> LogDiff:
    """Load both logs (raising LogProblem for an unusable one) and compare them."""
    return diff_logs(load(old), load(new))


def _compared(entry: Mapping[str, Any]) -> dict[str, Any]:
    return {k: v for k, v in entry.items() if k not in RECORD_KEYS}


def _changes(old: Mapping[str, Any], new: Mapping[str, Any], prefix: str = "") -> list[Change]:
    """Differing values, keys in the old entry's order then keys only the new one has."""
    found = []
    for key in [*old, *(k for k in new if k not in old)]:
        a, b = old.get(key), new.get(key)
        if isinstance(a, Mapping) and isinstance(b, Mapping):
            found.extend(_changes(a, b, f"{prefix}{key}."))
        elif not _same(a, b):
            found.append(Change(f"{prefix}{key}", a, b))
    return found


def _same(a: Any, b: Any) -> bool:
    """JSON equality where true is not 1 and a list is not a number, but 1 equals 1.0."""
    if isinstance(a, bool) or isinstance(b, bool):
        return type(a) is type(b) and a == b
    if isinstance(a, Mapping) and isinstance(b, Mapping):
        return a.keys() == b.keys() and all(_same(a[k], b[k]) for k in a)
    if isinstance(a, list) and isinstance(b, list):
        return len(a) == len(b) and all(_same(x, y) for x, y in zip(a, b, strict=True))
    if isinstance(a, int | float) and isinstance(b, int | float):
        return a == b
    return type(a) is type(b) and a == b


def as_json(diff: LogDiff, old_name: str, new_name: str) -> str:
    """The differences as indented JSON, naming both logs."""
    record = {"old": old_name, "new": new_name, **diff.as_record()}
    return json.dumps(record, indent=2, ensure_ascii=False) + "\n"


def as_table(diff: LogDiff, old_name: str, new_name: str) -> str:
    """A fixed-width table: one row per differing value, then a one-line summary."""
    rows: list[tuple[str, str, str, str, str]] = []
    for c in diff.log:
        rows.append(("log", "-", c.field, _show(c.old), _show(c.new)))
    for entry in diff.removed:
        rows.append(("removed", entry["column"], "recoding", _recoding(entry), "-"))
    for entry in diff.added:
        rows.append(("added", entry["column"], "recoding", "-", _recoding(entry)))
    for changed in diff.changed:
        for c in changed.changes:
            rows.append(("changed", changed.column, c.field, _show(c.old), _show(c.new)))
    for column in diff.set_aside_removed:
        rows.append(("set aside", column, "-", "set aside", "not set aside"))
    for column in diff.set_aside_added:
        rows.append(("set aside", column, "-", "not set aside", "set aside"))
    lines = [f"old: {old_name}", f"new: {new_name}", ""]
    if rows:
        lines.extend(_grid(("change", "column", "field", "old", "new"), rows))
        lines.append("")
    lines.append(_summary(diff))
    return "\n".join(lines) + "\n"


def _summary(diff: LogDiff) -> str:
    unasked = "notes, decision times, who decided and evidence are not compared"
    if diff.equal:
        return f"The logs define the same recodings ({unasked})."
    counts = [
        (len(diff.log), "outcome or training-data field(s) changed"),
        (len(diff.added), "recoding(s) added"),
        (len(diff.removed), "recoding(s) removed"),
        (len(diff.changed), "recoding(s) changed"),
        (len(diff.set_aside_added), "column(s) newly set aside"),
        (len(diff.set_aside_removed), "column(s) no longer set aside"),
    ]
    parts = [f"{n} {what}" for n, what in counts if n]
    return "The logs differ: " + "; ".join(parts) + f" ({unasked})."


def _recoding(entry: Mapping[str, Any]) -> str:
    shown = {k: v for k, v in entry.items() if k != "column"}
    return " ".join(f"{k}={_show(v)}" for k, v in shown.items())


def _show(value: Any) -> str:
    if value is None:
        return "(none)"
    if isinstance(value, str):
        return value
    return json.dumps(value, ensure_ascii=False, separators=(", ", ": "))


def _grid(header: Sequence[str], rows: Sequence[Sequence[str]]) -> list[str]:
    widths = [max(len(r[j]) for r in [header, *rows]) for j in range(len(header))]

    def line(cells: Sequence[str]) -> str:
        return "  ".join(c.ljust(w) for c, w in zip(cells, widths, strict=True)).rstrip()

    return [line(header), line(["-" * w for w in widths]), *(line(r) for r in rows)]

"""Read a recoding log: plain JSON only, checked against the shipped schema on every load.

Nothing in the file is ever executed. Every problem becomes one ``LogProblem`` line naming
the file and the entry at fault, e.g. ``log.json: recodings[3].params.knots: must be
strictly increasing``.
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Iterator, Mapping
from functools import cache
from importlib import resources
from pathlib import Path
from typing import TYPE_CHECKING, Any

from tui.recodings.codec import from_document
from tui.recodings.errors import EntryProblem, LogProblem, entry_path
from tui.recodings.model import FORMAT, FORMAT_VERSION, RecodingLog

if TYPE_CHECKING:
    import jsonschema

_JSON_TYPES = {
    dict: "an object",
    list: "a list",
    str: "text",
    bool: "true or false",
    int: "a number",
    float: "a number",
    type(None): "null",
}


MAX_LOG_BYTES = 64 << 20
"""Largest log read: thousands of decisions with their evidence take a few megabytes, so a
bigger file is not a recoding log, and reading it whole would only stall the command."""


def load(path: str | os.PathLike[str]) -> RecodingLog:
    """Read and check the log at ``path``; raises LogProblem naming the file and entry."""
    file = Path(path)
    if not file.exists():
        raise LogProblem(str(file), "", "file not found")
    if file.is_dir():
        raise LogProblem(str(file), "", "is a directory, not a recoding log")
    try:
        size = file.stat().st_size
        if size > MAX_LOG_BYTES:
            megabytes = f"{size / 2**20:.0f} MB"
            raise LogProblem(
                str(file), "", f"is {megabytes}; a recoding log is at most {MAX_LOG_BYTES >> 20} MB"
            )
        raw = file.read_bytes()
    except OSError as exc:
        raise LogProblem(str(file), "", f"cannot read: {exc.strerror or exc}") from None
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise LogProblem(str(file), "", f"not UTF-8 text (byte {exc.start})") from None
    return loads(text, str(file))


def loads(text: str, source: str = "<log>") -> RecodingLog:
    """The log held in JSON ``text``; ``source`` names it in error messages."""
    return validate(parse_strict(text, source), source)


def validate(document: Any, source: str = "<log>") -> RecodingLog:
    """Check a parsed JSON document and return the log it holds.

    Order of checks: non-finite numbers and repeated keys, the format and its version,
    the schema, then what the schema cannot say (see ``codec.from_document``).
    """
    try:
        _check_values(document, [])
        if not isinstance(document, dict):
            raise EntryProblem("", f"must hold a JSON object, not {_json_type(document)}")
        _check_format(document)
        _check_schema(document)
        return from_document(document)
    except EntryProblem as problem:
        raise LogProblem(source, problem.path, problem.what) from None


def parse_strict(text: str, source: str = "<log>") -> Any:
    """JSON ``text`` parsed without Python's extensions: NaN and Infinity are refused later.

    Non-finite literals and repeated keys are kept as markers so that ``validate`` can name
    the entry that holds them.
    """
    if not text.strip():
        raise LogProblem(source, "", "is empty")
    try:
        return json.loads(text, parse_constant=_NonFinite, object_pairs_hook=_object)
    except json.JSONDecodeError as exc:
        # A string that never closes runs to the end of the text: cut off, like the rest.
        if exc.pos >= len(text.rstrip()) or exc.msg.startswith("Unterminated string"):
            raise LogProblem(
                source, "", "ends early: the JSON is incomplete (truncated?)"
            ) from None
        raise LogProblem(
            source, "", f"not valid JSON at line {exc.lineno}, column {exc.colno}: {exc.msg}"
        ) from None
    except RecursionError:
        raise LogProblem(source, "", "nested too deeply to be a recoding log") from None


class _NonFinite(str):
    """A NaN, Infinity or -Infinity literal, which JSON itself does not allow."""


class _Repeated(dict):
    """An object in which some key appears more than once."""

    repeated: str = ""


def _object(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    result: dict[str, Any] = {}
    for key, value in pairs:
        if key in result and not isinstance(result, _Repeated):
            result = _Repeated(result)
            result.repeated = key
        result[key] = value
    return result


def _check_values(value: Any, path: list[str | int]) -> None:
    """Refuse non-finite numbers and repeated keys anywhere, naming where they are."""
    for where, item in _walk(value, path):
        if isinstance(item, _NonFinite):
            raise EntryProblem(entry_path(where), f"{item} is not allowed; numbers must be finite")
        if isinstance(item, _Repeated):
            raise EntryProblem(entry_path([*where, item.repeated]), "key appears more than once")
        if isinstance(item, float) and not math.isfinite(item):
            raise EntryProblem(entry_path(where), "number too large; numbers must be finite")
        if isinstance(item, int) and not isinstance(item, bool):
            try:
                float(item)
            except OverflowError:
                raise EntryProblem(entry_path(where), "number too large") from None


def _walk(value: Any, path: list[str | int]) -> Iterator[tuple[list[str | int], Any]]:
    stack = [(path, value)]
    while stack:
        where, item = stack.pop()
        yield where, item
        if isinstance(item, dict):
            stack.extend(([*where, k], v) for k, v in reversed(list(item.items())))
        elif isinstance(item, list):
            stack.extend(([*where, i], v) for i, v in reversed(list(enumerate(item))))


def _check_format(document: Mapping[str, Any]) -> None:
    """Say plainly when the file is not a log at all, or a log from a newer bendwise."""
    if document.get("format") != FORMAT:
        raise EntryProblem("format", f"must be '{FORMAT}'; this is not a bendwise recoding log")
    version = document.get("format_version")
    if isinstance(version, int) and not isinstance(version, bool) and version > FORMAT_VERSION:
        raise EntryProblem(
            "format_version",
            f"{version} is newer than this bendwise reads ({FORMAT_VERSION}); "
            "update bendwise to read it",
        )


@cache
def _validator() -> jsonschema.Draft202012Validator:
    import jsonschema  # only reading a log needs it: the scan command starts faster

    schema = json.loads(resources.files("tui.recodings").joinpath("schema.json").read_text())
    return jsonschema.Draft202012Validator(schema)


def schema() -> dict[str, Any]:
    """The JSON Schema shipped with the package (a copy)."""
    return json.loads(json.dumps(_validator().schema))


def _check_schema(document: Mapping[str, Any]) -> None:
    errors = list(_validator().iter_errors(document))
    if not errors:
        return
    # The first problem in document order (as the file is written, not sorted by key), so
    # the message points at the earliest entry; ties keep the validator's order.
    first = min(errors, key=lambda e: _position(document, e))
    raise EntryProblem(*_describe(first))


def _position(document: Any, error: jsonschema.ValidationError) -> list[int]:
    """Where the error sits in the file: the place of each key or item on its path."""
    where: list[int] = []
    item = document
    for part in error.path:
        where.append(list(item).index(part) if isinstance(item, dict) else int(part))
        item = item[part]
    if error.validator == "additionalProperties" and isinstance(item, dict):
        where.append(list(item).index(_unknown_keys(error)[0]))
    return where


def _unknown_keys(error: jsonschema.ValidationError) -> list[str]:
    """Keys the schema does not allow here, in the order the file has them."""
    allowed = set(error.schema.get("properties", {}))
    return [k for k in error.instance if k not in allowed]


def _describe(error: jsonschema.ValidationError) -> tuple[str, str]:
    """(entry path, what is wrong) in our words rather than the validator's."""
    path = list(error.path)
    rule, expected, found = error.validator, error.validator_value, error.instance
    if rule == "required":
        missing = next(k for k in expected if k not in found)
        return entry_path([*path, missing]), "is missing"
    if rule == "additionalProperties":
        allowed = set(error.schema.get("properties", {}))
        extra = _unknown_keys(error)
        if not allowed:
            return entry_path([*path, extra[0]]), "is not allowed: this object takes no keys"
        known = ", ".join(sorted(allowed))
        return entry_path([*path, extra[0]]), f"is not a known key here (known: {known})"
    where = entry_path(path)
    if rule == "type":
        wanted = expected if isinstance(expected, str) else " or ".join(expected)
        return where, f"must be {_type_words(wanted)}, not {_json_type(found)}"
    if rule == "enum" and path and path[-1] == "kind":
        return where, f"unknown kind {found!r}; known kinds: {', '.join(expected)}"
    if rule == "enum":
        return where, f"{found!r} is not one of {', '.join(repr(v) for v in expected)}"
    if rule == "const":
        return where, f"must be {json.dumps(expected)}, not {json.dumps(found)}"
    if rule == "minItems":
        return where, f"must hold at least {expected} item(s), not {len(found)}"
    if rule == "maxItems":
        return where, f"must hold at most {expected} item(s), not {len(found)}"
    if rule == "uniqueItems":
        return where, "names an output more than once"
    if rule == "minLength":
        return where, "must not be empty"
    if rule == "pattern" and path and path[-1] == "sha256":
        return where, "must be 64 lower-case hexadecimal digits"
    if rule == "pattern":
        return where, "must not contain control characters (tabs, line breaks)"
    if rule == "minimum":
        return where, f"must be at least {expected}, not {found}"
    return where, error.message


def _type_words(names: str) -> str:
    words = {
        "object": "an object",
        "array": "a list",
        "string": "text",
        "number": "a number",
        "integer": "a whole number",
        "boolean": "true or false",
        "null": "null",
    }
    return " or ".join(words.get(n, n) for n in names.split(" or "))


def _json_type(value: Any) -> str:
    return _JSON_TYPES.get(type(value), _JSON_TYPES.get(type(value).__mro__[1], "a value"))

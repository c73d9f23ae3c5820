"""Write a recoding log: indented JSON in a fixed key order, replaced atomically.

Lists of plain values (knots, edges, outputs, ranges) stay on one line, so a changed knot
is a one-line diff. A log is checked exactly as ``load`` would check it before a byte is
written, so every file bendwise writes can be read back.
"""

from __future__ import annotations

import json
import os
from pathlib import Path
from typing import Any

from tui.paths import write_output
from tui.problems import InputProblem
from tui.recodings.codec import to_document
from tui.recodings.errors import LogProblem
from tui.recodings.load import validate
from tui.recodings.model import RecodingLog

_INDENT = "  "


def dumps(log: RecodingLog, source: str = "<log>") -> str:
    """The log as the text ``save`` writes; raises LogProblem when it would not load."""
    try:
        document = to_document(log)
    except (TypeError, ValueError) as problem:
        raise LogProblem(source, "", str(problem)) from None
    validate(document, source)
    return render(document) + "\n"


def save(log: RecodingLog, path: str | os.PathLike[str]) -> None:
    """Write ``log`` to ``path`` atomically: the old file survives any failure intact."""
    target = Path(path)
    text = dumps(log, str(target))
    if target.is_dir():
        raise InputProblem(f"cannot write {target}: it is a directory")
    write_output(target, text)


def render(value: Any, depth: int = 0) -> str:
    """Indented JSON with lists of scalars kept on one line."""
    pad, inner = _INDENT * depth, _INDENT * (depth + 1)
    if isinstance(value, dict):
        if not value:
            return "{}"
        items = [f"{inner}{_scalar(str(k))}: {render(v, depth + 1)}" for k, v in value.items()]
        return "{\n" + ",\n".join(items) + f"\n{pad}}}"
    if isinstance(value, list):
        if all(not isinstance(v, dict | list) for v in value):
            return "[" + ", ".join(_scalar(v) for v in value) + "]"
        items = [f"{inner}{render(v, depth + 1)}" for v in value]
        return "[\n" + ",\n".join(items) + f"\n{pad}]"
    return _scalar(value)


def _scalar(value: Any) -> str:
    # allow_nan=False: a NaN reaching this point is a bug, never a file.
    return json.dumps(value, ensure_ascii=False, allow_nan=False)

"""Column names a file must have before anything reads it: each one present, not blank,
of a sane length and said once.

pandas quietly renames what it cannot keep (a blank name becomes ``Unnamed: 1``, a repeated
``x`` becomes ``x.1``), so text files are judged on their header line as written.
"""

from __future__ import annotations

import csv
from collections import Counter
from collections.abc import Sequence
from pathlib import Path

from tui.names import shown_name
from tui.problems import InputProblem

MAX_NAME_CHARS = 1000
"""Longest column name accepted; derived names add a suffix and databases cap identifiers
far lower, so a longer one is a damaged header rather than a name."""


def check_names(file: Path, names: Sequence[str]) -> None:
    """Raise InputProblem for a blank, overlong or repeated column name."""
    for position, name in enumerate(names, 1):
        if not str(name).strip():
            raise InputProblem(
                f"column {position} of {file} has an empty name; give every column a name"
            )
        if len(str(name)) > MAX_NAME_CHARS:
            raise InputProblem(
                f"column {position} of {file} has a name {len(str(name))} characters long "
                f"(at most {MAX_NAME_CHARS}), starting '{str(name)[:40]}…'"
            )
    counts = Counter(str(name) for name in names)
    repeated = [name for name, times in counts.items() if times > 1]
    if repeated:
        shown = ", ".join(shown_name(name) for name in repeated)
        raise InputProblem(f"column names appear more than once in {file}: {shown}")


def text_header(file: Path, sep: str) -> list[str]:
    """The names on the first non-blank line of a delimited text file, as written."""
    csv.field_size_limit(1 << 30)  # a long name is judged by check_names, not here
    with file.open(encoding="utf-8-sig", errors="replace", newline="") as handle:
        for row in csv.reader(handle, delimiter=sep):
            if row:
                return row
    return []

"""What one review holds: the data, the scan results so far, and the recoding log on disk.

Every decision goes through ``ReviewSession`` and is saved before it counts: the log in
memory changes only after the file on disk has been written, so what the screens show is
what a dropped connection would leave behind.
"""

from __future__ import annotations

import math
import os
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

from tui.app.logfile import load_log, save_log
from tui.engine.compare import FormFit
from tui.engine.scan import ColumnScan, ScanSettings
from tui.intake.dataset import Dataset, file_sha256, open_dataset
from tui.intake.errors import InputProblem
from tui.intake.profile import ColumnProfile
from tui.recodings.model import Decision, RecodingLog, SetAside, SourceInfo

UNDECIDED, KEPT_LINEAR, SET_ASIDE = "undecided", "kept linear", "set aside"


class LogNotSaved(Exception):
    """The log file could not be written; the decision was not recorded."""


def default_log_path(data: Path) -> Path:
    """``<data stem>.recodings.json`` in the working folder."""
    return Path(f"{data.stem}.recodings.json")


def _plain(value: Any) -> Any:
    """A JSON-safe scalar: numpy numbers become Python ones, NaN and inf become None."""
    if isinstance(value, bool) or value is None or isinstance(value, str):
        return value
    if isinstance(value, int | float) or hasattr(value, "item"):
        number = value.item() if hasattr(value, "item") else value
        if isinstance(number, float) and not math.isfinite(number):
            return None
        return number
    if isinstance(value, list | tuple):
        return [_plain(v) for v in value]
    return value


@dataclass
class ReviewSession:
    """The state of one review, shared by every screen."""

    dataset: Dataset
    """The training data (rows with an outcome)."""
    log: RecodingLog
    """The decisions as saved on disk."""
    log_path: Path
    """Where the log is saved."""
    settings: ScanSettings = field(default_factory=ScanSettings)
    """Groups and knots of the scan (and the starting ones of the inspection)."""
    source_warning: str | None = None
    """Set when the loaded log was written for different data."""
    ranked: list[ColumnScan] = field(default_factory=list)
    """Scan results so far, most non-linear first."""
    scan_finished: bool = False
    """All columns scanned: q-values and shape hints are final."""
    drafts: dict[str, str] = field(default_factory=dict)
    """Notes typed for columns not yet decided."""
    order: list[str] = field(default_factory=list)
    """Columns in the order the list screen shows them (for previous / next)."""
    hand_cuts: dict[str, tuple[float, ...]] = field(default_factory=dict)
    """Indicator cut points typed for each column."""
    hand_hinges: dict[str, tuple[float, ...]] = field(default_factory=dict)
    """Hinge knots typed for each column."""

    def __post_init__(self) -> None:
        self._profiles: dict[str, ColumnProfile] = {p.name: p for p in self.dataset.numeric}

    # --- what is known of a column -------------------------------------------------------

    @property
    def columns(self) -> list[str]:
        """Every numeric column to review, in file order."""
        return self.dataset.columns

    def scan_of(self, column: str) -> ColumnScan | None:
        """The column's scan result, once the scan has reached it."""
        return next((s for s in self.ranked if s.column == column), None)

    def profile_of(self, column: str) -> ColumnProfile:
        """Counts and range of the column's values."""
        return self._profiles[column]

    def decision_word(self, column: str) -> str:
        """``undecided``, ``kept linear``, ``set aside`` or the accepted form."""
        if self.log.is_set_aside(column):
            return SET_ASIDE
        decision = self.log.decision_for(column)
        if decision is None:
            return UNDECIDED
        if decision.recoding.kind == "linear" and decision.recoding.clip is None:
            return KEPT_LINEAR
        return decision.recoding.describe()

    def decision_phrase(self, column: str) -> str:
        """``undecided``, or ``decided: <what>``, for a line of text."""
        word = self.decision_word(column)
        return word if word == UNDECIDED else f"decided: {word}"

    def is_decided(self, column: str) -> bool:
        """Whether the log holds anything for the column."""
        return self.decision_word(column) != UNDECIDED

    def decided_count(self) -> int:
        """Columns of this data with a decision or set aside."""
        return sum(1 for c in self.columns if self.is_decided(c))

    def note_of(self, column: str) -> str:
        """The note typed for the column (draft first, then the saved one)."""
        if column in self.drafts:
            return self.drafts[column]
        decision = self.log.decision_for(column)
        if decision is not None:
            return decision.note
        aside = next((s for s in self.log.set_aside if s.column == column), None)
        return aside.note if aside is not None else ""

    def neighbour(self, column: str, step: int) -> str | None:
        """The column ``step`` places away in the list's order (None past either end)."""
        if column not in self.order:
            return self.order[0] if self.order else None
        i = self.order.index(column) + step
        return self.order[i] if 0 <= i < len(self.order) else None

    # --- decisions (each saved before it counts) -----------------------------------------

    def accept(
        self, column: str, row: FormFit, groups: int, knots: int, by_hand: bool = False
    ) -> Decision:
        """Record the form in ``row`` for ``column`` and save the log."""
        if row.recoding is None:
            raise ValueError(f"{row.label} has no learned recoding to accept")
        profile = self.profile_of(column)
        if profile.minimum is None or profile.maximum is None:
            raise ValueError(f"{column} has no finite values")
        taken = {str(c) for c in self.dataset.column_names}
        taken |= self.log.without(column).output_names()
        decision = Decision.make(
            column,
            row.recoding,
            (profile.minimum, profile.maximum),
            note=self.note_of(column),
            evidence=self.evidence(column, row, groups, knots, by_hand),
            taken=taken,
        )
        self._commit(self.log.with_decision(decision))
        self.drafts.pop(column, None)
        return decision

    def set_aside(self, column: str) -> SetAside:
        """Record that the column is not to be used, and save the log."""
        entry = SetAside(column, note=self.note_of(column))
        self._commit(self.log.with_set_aside(entry))
        self.drafts.pop(column, None)
        return entry

    def remove(self, column: str) -> None:
        """Remove whatever the log holds for the column, and save."""
        note = self.note_of(column)
        self._commit(self.log.without(column))
        if note:
            self.drafts[column] = note  # the reason is kept for the next decision

    def set_note(self, column: str, note: str) -> bool:
        """Change the column's note; True when it was saved (the column is decided)."""
        decision = self.log.decision_for(column)
        if decision is not None:
            changed = replace(decision, note=note)
            decisions = tuple(changed if d.column == column else d for d in self.log.decisions)
            self._commit(replace(self.log, decisions=decisions))
            self.drafts.pop(column, None)
            return True
        if self.log.is_set_aside(column):
            entries = tuple(
                replace(s, note=note) if s.column == column else s for s in self.log.set_aside
            )
            self._commit(replace(self.log, set_aside=entries))
            self.drafts.pop(column, None)
            return True
        self.drafts[column] = note
        return False

    def evidence(
        self, column: str, row: FormFit, groups: int, knots: int, by_hand: bool
    ) -> dict[str, Any]:
        """What the screens showed when the form was accepted."""
        scan = self.scan_of(column)
        final = self.scan_finished
        evidence: Mapping[str, Any] = {
            "form": row.label,
            "df": row.df,
            "deviance": row.deviance,
            "aic": row.aic,
            "delta_aic": row.delta_aic,
            "lr_p": row.lr_p,
            "notes": list(row.notes),
            "by_hand": by_hand,
            "groups": groups,
            "knots": knots,
            "score": scan.score if scan else None,
            "score_df": scan.df if scan else None,
            "score_p": scan.p_value if scan else None,
            "q_value": scan.q_value if scan and final else None,
            "shape": scan.shape if scan and final else None,
        }
        return {key: _plain(value) for key, value in evidence.items()}

    def _commit(self, log: RecodingLog) -> None:
        try:
            save_log(log, self.log_path)
        except InputProblem as problem:  # the log module's one error type (names the file)
            raise LogNotSaved(str(problem)) from problem
        except OSError as problem:
            reason = problem.strerror or str(problem)
            raise LogNotSaved(f"cannot write {self.log_path}: {reason}") from problem
        self.log = log


def open_session(
    data: str | Path,
    outcome: str,
    event: str | None = None,
    exclude: tuple[str, ...] | list[str] = (),
    log_path: str | Path | None = None,
    settings: ScanSettings | None = None,
) -> ReviewSession:
    """Read the data and the log (or start an empty one). Raises InputProblem."""
    data = Path(data)
    path = Path(log_path) if log_path is not None else default_log_path(data)
    if data.exists() and path.exists() and path.resolve() == data.resolve():
        raise InputProblem(f"--log {path} is the data file; choose another name for the log")
    dataset = open_dataset(data, outcome, event, exclude)
    if not dataset.columns:
        raise InputProblem(f"{data} has no numeric columns to review besides '{outcome}'")
    folder = path.parent if str(path.parent) else Path(".")
    if path.exists() and not path.is_file():
        raise InputProblem(f"--log {path} is not a file")
    if not folder.is_dir():
        raise InputProblem(f"cannot keep the log at {path}: folder {folder} does not exist")
    if not os.access(folder, os.W_OK):
        raise InputProblem(f"cannot keep the log at {path}: folder {folder} is not writable")
    sha = file_sha256(data)
    coded = dataset.outcome
    source = SourceInfo(name=data.name, rows=int(coded.keep.size), sha256=sha)
    warning = None
    if path.exists():
        log = load_log(path)
        if log.outcome_column != coded.column:
            raise InputProblem(
                f"{path} holds decisions for outcome '{log.outcome_column}', not '{coded.column}'"
            )
        if str(log.event) != str(coded.event):
            raise InputProblem(
                f"{path} counts '{log.event}' as the event, but this data counts "
                f"'{coded.event}'; pass --event {log.event}"
            )
        if log.source.sha256 != sha:
            warning = (
                f"{path.name} was written for {log.source.name} with different contents "
                f"(its sha256 differs from {data.name}); check its decisions"
            )
    else:
        log = RecodingLog(outcome_column=coded.column, event=_plain(coded.event), source=source)
    return ReviewSession(dataset, log, path, settings or ScanSettings(), warning)

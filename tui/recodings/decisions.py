"""The decisions of one review and their log file: the service the review app calls.

Every change goes through ``DecisionBook`` and is saved before it counts: the log in memory
changes only after the file on disk has been written, so what a screen shows is what a
dropped connection would leave behind. Nothing here knows of screens.
"""

from __future__ import annotations

import math
import os
from collections.abc import Iterable
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

from tui import __version__
from tui.engine.compare import FormFit
from tui.engine.forms.base import MissingFill, Recoding
from tui.engine.robust_wald import LR
from tui.engine.scan import ColumnScan
from tui.engine.stability import SelectionShares
from tui.paths import same_file
from tui.problems import InputProblem
from tui.recodings.evidence import (
    DataFingerprint,
    Evidence,
    RowFigures,
    ScoreFigures,
    Selection,
    Weights,
)
from tui.recodings.load import load
from tui.recodings.lock import LogLock, acquire, lock_path, login_name, read_holder
from tui.recodings.model import Decision, RecodingLog, SetAside, SourceInfo
from tui.recodings.save import save

UNDECIDED, KEPT_LINEAR, SET_ASIDE = "undecided", "kept linear", "set aside"
RECODED = "recoded"
"""A column is *decided* when the log holds one of three things for it: a recoding (any
accepted form other than plain linear), kept linear, or set aside. Every surface counts
these three (``DecidedCounts``)."""


@dataclass(frozen=True)
class DecidedCounts:
    """How many columns are recoded, kept linear and set aside (together: decided)."""

    recoded: int = 0
    kept_linear: int = 0
    set_aside: int = 0

    @property
    def decided(self) -> int:
        """Columns with anything in the log."""
        return self.recoded + self.kept_linear + self.set_aside

    def words(self) -> str:
        """``2 recoded · 1 kept linear · 0 set aside``."""
        return (
            f"{self.recoded} {RECODED} · {self.kept_linear} {KEPT_LINEAR} · "
            f"{self.set_aside} {SET_ASIDE}"
        )

    def short_words(self) -> str:
        """Only the counts that are not zero, ``2 recoded · 1 set aside`` (``""`` for none):
        for a line with little room."""
        named = (
            (self.recoded, RECODED),
            (self.kept_linear, KEPT_LINEAR),
            (self.set_aside, SET_ASIDE),
        )
        return " · ".join(f"{n} {word}" for n, word in named if n)


def is_kept_linear(recoding: Recoding) -> bool:
    """A plain linear term (a clipped or filled linear term is a recoding)."""
    return recoding.kind == "linear" and recoding.clip is None and recoding.missing is None


def decided_counts(log: RecodingLog, columns: Iterable[str] | None = None) -> DecidedCounts:
    """The three counts of ``log``, over ``columns`` only when given."""
    wanted = None if columns is None else set(columns)
    chosen = [d for d in log.decisions if wanted is None or d.column in wanted]
    linear = sum(1 for d in chosen if is_kept_linear(d.recoding))
    aside = sum(1 for s in log.set_aside if wanted is None or s.column in wanted)
    return DecidedCounts(len(chosen) - linear, linear, aside)


class LogNotSaved(Exception):
    """The log file could not be written; the decision was not recorded."""


class ReadOnlyLog(LogNotSaved):
    """The review was opened read-only: it browses, and records nothing."""


def default_log_path(data: Path) -> Path:
    """``<data stem>.recodings.json`` in the working folder."""
    return Path(f"{data.stem}.recodings.json")


def json_scalar(value: Any) -> Any:
    """A JSON-safe scalar: numpy numbers become Python ones, NaN and inf become None."""
    if isinstance(value, bool) or value is None or isinstance(value, str):
        return value
    if isinstance(value, int | float) or hasattr(value, "item"):
        number = value.item() if hasattr(value, "item") else value
        if isinstance(number, float) and not math.isfinite(number):
            return None
        return number
    if isinstance(value, list | tuple):
        return [json_scalar(v) for v in value]
    return value


def _number(value: float | None) -> float | None:
    return json_scalar(None if value is None else float(value))


def check_log_place(path: Path, data: Path) -> None:
    """Raise InputProblem when the log cannot be kept at ``path`` (the data file itself,
    not a file, or a folder that is missing or not writable)."""
    if data.exists() and same_file(path, data):
        raise InputProblem(f"--log {path} is the data file; choose another name for the log")
    folder = path.parent if str(path.parent) else Path(".")
    if path.exists() and not path.is_file():
        raise InputProblem(f"--log {path} is not a file")
    if not folder.is_dir():
        raise InputProblem(f"cannot keep the log at {path}: folder {folder} does not exist")
    if not os.access(folder, os.W_OK):
        raise InputProblem(f"cannot keep the log at {path}: folder {folder} is not writable")


def open_log(
    path: Path, outcome: str, event: Any, source: SourceInfo
) -> tuple[RecodingLog, str | None]:
    """The log at ``path`` (or an empty one when there is none) and a warning when it was
    written for other data. Raises InputProblem when it holds another outcome or event."""
    if not path.exists():
        return RecodingLog(outcome_column=outcome, event=json_scalar(event), source=source), None
    log = load(path)
    if log.outcome_column != outcome:
        raise InputProblem(
            f"{path} holds decisions for outcome '{log.outcome_column}', not '{outcome}'"
        )
    if str(log.event) != str(event):
        raise InputProblem(
            f"{path} counts '{log.event}' as the event, but this data counts "
            f"'{event}'; pass --event {log.event}"
        )
    warning = None
    if log.source.sha256 != source.sha256:
        warning = (
            f"{path.name} was written for {log.source.name} with different contents "
            f"(its sha256 differs from {source.name}); check its decisions"
        )
    return log, warning


@dataclass(frozen=True)
class Access:
    """How a review holds its log: the lock (None when read-only), why it may not
    write (None when it may), and a notice for the analyst (a lock taken over, say)."""

    lock: LogLock | None
    read_only: str | None
    notice: str | None


def take_log(
    path: Path, read_only: bool = False, take_over: bool = False, analyst: str | None = None
) -> Access:
    """Lock the log at ``path`` for this review, or open it read-only (``read_only``);
    raises LogLocked (an InputProblem) when another review holds it."""
    if read_only:
        holder = read_holder(lock_path(path))
        held = f"; held by {holder.describe()}" if holder else ""
        return Access(None, "opened with --read-only", f"read-only: no decisions{held}")
    lock, notice = acquire(path, take_over, analyst)
    return Access(lock, None, notice)


@dataclass(frozen=True)
class Design:
    """The covariates and weights a row was fitted with, as the evidence names them."""

    adjusted_for: tuple[str, ...] = ()
    """Covariates in the fits (never the column itself)."""
    words: str = "unadjusted"
    """How each covariate and the weights entered, in words."""
    weight: str | None = None
    """Weight column, if any."""
    weight_kind: str | None = None
    """``frequency`` or ``survey`` (None without weights)."""


def judged_evidence(
    row: FormFit,
    groups: int,
    knots: int,
    by_hand: bool,
    scan: ColumnScan | None,
    scan_finished: bool,
    design: Design,
    data: DataFingerprint,
) -> Evidence:
    """What the screens showed when ``row`` was accepted. ``scan`` is the column's score
    when it came from the same design as the row (None otherwise); its q-value and shape
    count only once the scan has finished."""
    final = scan is not None and scan_finished
    return Evidence(
        row=RowFigures(
            form=row.label,
            df=int(row.df),
            deviance=_number(row.deviance),
            aic=_number(row.aic),
            delta_aic=_number(row.delta_aic),
            lr_p=_number(row.lr_p),
            notes=tuple(str(n) for n in row.notes),
            by_hand=bool(by_hand),
        ),
        groups=int(groups),
        knots=int(knots),
        score=ScoreFigures(
            statistic=_number(scan.score) if scan else None,
            df=int(scan.df) if scan and scan.df is not None else None,
            p=_number(scan.p_value) if scan else None,
            test=(scan.statistic or LR) if scan else LR,
            q_value=_number(scan.q_value) if scan and final else None,
            shape=scan.shape if scan and final else None,
        ),
        adjusted_for=design.adjusted_for,
        adjustment=design.words,
        weights=Weights(design.weight, design.weight_kind),
        data=data,
        version=__version__,
    )


def with_selection(evidence: Evidence, shares: SelectionShares | None) -> Evidence:
    """The evidence with the bootstrap shares shown beside the table (None: not computed)."""
    if shares is None:
        return evidence
    return replace(
        evidence, selection=Selection(shares.resamples, shares.seed, dict(shares.shares))
    )


@dataclass
class DecisionBook:
    """The recoding log of one review and every change to it, each saved before it counts."""

    log: RecodingLog
    """The decisions as saved on disk."""
    path: Path
    """Where the log is saved."""
    history: list[tuple[RecodingLog, str]] = field(default_factory=list)
    """Each earlier log of this review with the change made from it, oldest first: ``undo``
    walks back through them (the review's own changes only, never what the file held
    before it started)."""
    read_only: str | None = None
    """Why nothing may be recorded (another review holds the lock, or ``--read-only``);
    None when this review may write."""
    lock: LogLock | None = None
    """The log's lock, while this review holds it."""
    analyst: str = field(default_factory=login_name)
    """Who decides: written as ``decided_by`` with each decision."""

    def close(self) -> None:
        """End the review's hold on the log (removes its lock file)."""
        if self.lock is not None:
            self.lock.release()
            self.lock = None

    def decision_word(self, column: str) -> str:
        """``undecided``, ``kept linear``, ``set aside`` or the accepted form."""
        if self.log.is_set_aside(column):
            return SET_ASIDE
        decision = self.log.decision_for(column)
        if decision is None:
            return UNDECIDED
        if is_kept_linear(decision.recoding):
            return KEPT_LINEAR
        return decision.recoding.describe()

    def saved_note(self, column: str) -> str:
        """The note the log holds for the column ("" when none)."""
        decision = self.log.decision_for(column)
        if decision is not None:
            return decision.note
        aside = next((s for s in self.log.set_aside if s.column == column), None)
        return aside.note if aside is not None else ""

    def forms(self) -> dict[str, Recoding]:
        """Each decided column's accepted recoding."""
        return {d.column: d.recoding for d in self.log.decisions}

    def accept(
        self,
        column: str,
        recoding: Recoding,
        training_range: tuple[float, float],
        note: str,
        evidence: Evidence,
        source_columns: set[str],
        deciles: tuple[float, ...] | None = None,
    ) -> Decision:
        """Record ``recoding`` for ``column`` (output names clear of ``source_columns`` and
        of the log's other outputs) and save the log; ``deciles`` are the training
        column's, kept for ``bendwise check``."""
        taken = source_columns | self.log.without(column).output_names()
        decision = Decision.make(
            column,
            recoding,
            training_range,
            note=note,
            evidence=evidence,
            taken=taken,
            deciles=deciles,
            decided_by=self.analyst,
        )
        what = KEPT_LINEAR if is_kept_linear(recoding) else recoding.describe()
        self._commit(self.log.with_decision(decision), f"{column} {what}")
        return decision

    def set_missing(
        self, column: str, rule: MissingFill | None, source_columns: set[str]
    ) -> Decision:
        """Change how the decided column's missing values are coded (None: leave them
        missing) and save the log; the form, note and evidence stay as accepted."""
        decision = self.log.decision_for(column)
        if decision is None:
            raise ValueError(f"{column} has no accepted form to code missing values for")
        taken = source_columns | self.log.without(column).output_names()
        changed = Decision.make(
            column,
            replace(decision.recoding, missing=rule),
            decision.range,
            note=decision.note,
            evidence=decision.evidence,
            taken=taken,
        )
        decisions = tuple(changed if d.column == column else d for d in self.log.decisions)
        coded = "left missing" if rule is None else f"missing as {rule.fill:g}"
        self._commit(replace(self.log, decisions=decisions), f"{column} {coded}")
        return changed

    def set_aside(self, column: str, note: str) -> SetAside:
        """Record that the column is not to be used, and save the log."""
        entry = SetAside(column, note=note, decided_by=self.analyst)
        self._commit(self.log.with_set_aside(entry), f"{column} {SET_ASIDE}")
        return entry

    def remove(self, column: str) -> str:
        """Remove whatever the log holds for the column and save; returns its note."""
        note = self.saved_note(column)
        self._commit(self.log.without(column), f"{column} removed from the log")
        return note

    def set_note(self, column: str, note: str) -> bool:
        """Change the note of a decided or set-aside column and save; False (nothing
        changed) when the log holds nothing for it."""
        decision = self.log.decision_for(column)
        if decision is not None:
            changed = replace(decision, note=note)
            decisions = tuple(changed if d.column == column else d for d in self.log.decisions)
            self._commit(replace(self.log, decisions=decisions), f"note on {column}")
            return True
        if self.log.is_set_aside(column):
            entries = tuple(
                replace(s, note=note) if s.column == column else s for s in self.log.set_aside
            )
            self._commit(replace(self.log, set_aside=entries), f"note on {column}")
            return True
        return False

    def counts(self, columns: Iterable[str] | None = None) -> DecidedCounts:
        """Recoded, kept linear and set aside (over ``columns`` when given)."""
        return decided_counts(self.log, columns)

    def last_change(self) -> str | None:
        """The change ``undo`` would take back, in words (None when there is none)."""
        return self.history[-1][1] if self.history else None

    def undo(self) -> str | None:
        """Take back the last change of this review and save the log as it was before it;
        returns the change undone (None when nothing is left to undo). Raises LogNotSaved,
        and then nothing changes."""
        if not self.history:
            return None
        before, what = self.history[-1]
        self._save(before)
        self.history.pop()
        self.log = before
        return what

    def _commit(self, log: RecodingLog, what: str) -> None:
        if self.read_only is not None:
            raise ReadOnlyLog(f"read-only review ({self.read_only}): nothing recorded")
        self._save(log)
        self.history.append((self.log, what))
        self.log = log

    def _save(self, log: RecodingLog) -> None:
        try:
            save(log, self.path)
        except InputProblem as problem:  # the log module's one error type (names the file)
            raise LogNotSaved(str(problem)) from problem
        except OSError as problem:
            reason = problem.strerror or str(problem)
            raise LogNotSaved(f"cannot write {self.path}: {reason}") from problem

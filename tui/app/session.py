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

from tui.app.adjusting import Adjustments, Basis
from tui.app.logfile import load_log, save_log
from tui.engine.adjust import Adjustment
from tui.engine.compare import FormFit
from tui.engine.forms.base import Recoding
from tui.engine.scan import ColumnScan, ScanSettings
from tui.intake.dataset import ColumnarDataset, Dataset, file_sha256, open_dataset
from tui.intake.profile import ColumnProfile
from tui.intake.weights import FREQUENCY
from tui.paths import same_file
from tui.problems import InputProblem
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

    dataset: Dataset | ColumnarDataset
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
    adjust: tuple[str, ...] = ()
    """Covariates asked for on the command line (``--adjust``): in every fit."""
    weight: str | None = None
    """Weight column (``--weight``): in every fit, never reviewed itself."""
    weight_kind: str | None = None
    """``frequency`` or ``survey`` (None without weights)."""
    first_ranked: list[ColumnScan] = field(default_factory=list)
    """The first scan's results, to return to after working-model re-scores."""
    scored_with: dict[str, Basis] = field(default_factory=dict)
    """Columns whose score shown was not computed with ``base`` (working-model re-scores)."""
    model: tuple[str, ...] | None = None
    """Covariates of the last working-model re-score (None: first scan's scores shown)."""
    data_sha256: str | None = None
    """sha256 of the data file reviewed: each decision's evidence names the data it was
    judged on, since a log reused on another extract keeps its first ``source``."""

    def __post_init__(self) -> None:
        self._profiles: dict[str, ColumnProfile] = {p.name: p for p in self.dataset.numeric}
        self.adjustments = Adjustments(
            self.dataset, self.dataset.outcome.column, self.weight, self.weight_kind
        )
        # The first scan's covariates enter in the forms the log held at the start.
        self.base: Basis = self.adjustments.basis(self.adjust, self._forms())

    # --- what is known of a column -------------------------------------------------------

    @property
    def columns(self) -> list[str]:
        """Every numeric column to review, in file order (the weight column is not one)."""
        return [c for c in self.dataset.columns if c != self.weight]

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

    # --- adjustment: what each column's fits carry ---------------------------------------

    def basis_of(self, column: str) -> Basis:
        """Covariates and weights of the score shown for the column (and of its table)."""
        return self.scored_with.get(column, self.base)

    def adjustment(self, basis: Basis) -> Adjustment | None:
        """The engine's adjustment for a basis this session built."""
        return self.adjustments.of(basis)

    def adjusted_for(self, column: str, basis: Basis | None = None) -> tuple[str, ...]:
        """Covariates in the column's fits (never the column itself)."""
        return (self.basis_of(column) if basis is None else basis).adjusted_for(column)

    def describe_basis(self, column: str, basis: Basis | None = None, forms: bool = True) -> str:
        """E.g. ``adjusted for age (linear), bmi (quadratic); frequency weights w``; without
        ``forms``, the covariates' names only (``adjusted for age, bmi; ...``)."""
        basis = self.basis_of(column) if basis is None else basis
        adjust = self.adjustment(basis)
        if adjust is None:
            return "unadjusted"
        if forms:
            return adjust.describe(column)
        parts = []
        if basis.adjusted_for(column):
            parts.append("adjusted for " + ", ".join(basis.adjusted_for(column)))
        if basis.weight:
            parts.append(f"{basis.weight_kind} weights {basis.weight}")
        return "; ".join(parts) or "unadjusted"

    def zero_weight_rows(self) -> int:
        """Rows whose weight is zero (left out of every fit)."""
        adjust = self.adjustment(self.base)
        if adjust is None or adjust.weights is None:
            return 0
        return int((adjust.weights == 0).sum())

    def working_model(self) -> tuple[str, ...]:
        """The ``--adjust`` covariates, then every column with an accepted form or kept
        linear, in the order decided (set-aside columns are left out)."""
        here = set(self.columns)
        decided = [d.column for d in self.log.decisions if d.column in here]
        return tuple(dict.fromkeys([*self.adjust, *decided]))

    def model_basis(self) -> Basis:
        """The working model built now, in the forms the log holds (raises InputProblem)."""
        return self.adjustments.basis(self.working_model(), self._forms())

    def undecided(self) -> list[str]:
        """Columns with nothing in the log, in file order."""
        return [c for c in self.columns if not self.is_decided(c)]

    def rescored(self, result: ColumnScan, basis: Basis) -> None:
        """A working-model score replaces the column's score (q-values for ``rank``)."""
        self.scored_with[result.column] = basis
        self.ranked = [s for s in self.ranked if s.column != result.column] + [result]

    def first_scores(self) -> None:
        """Back to the first scan's scores."""
        self.ranked = list(self.first_ranked)
        self.scored_with.clear()
        self.model = None

    def _forms(self) -> dict[str, Recoding]:
        return {d.column: d.recoding for d in self.log.decisions}

    # --- decisions (each saved before it counts) -----------------------------------------

    def accept(
        self,
        column: str,
        row: FormFit,
        groups: int,
        knots: int,
        by_hand: bool = False,
        basis: Basis | None = None,
    ) -> Decision:
        """Record the form in ``row`` for ``column`` and save the log. ``basis`` is what the
        row was fitted with (default: the basis of the column's score)."""
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
            evidence=self.evidence(column, row, groups, knots, by_hand, basis),
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
        self,
        column: str,
        row: FormFit,
        groups: int,
        knots: int,
        by_hand: bool,
        basis: Basis | None = None,
    ) -> dict[str, Any]:
        """What the screens showed when the form was accepted, and the covariates and
        weights it was judged with (evidence only: replay never reads them)."""
        basis = self.basis_of(column) if basis is None else basis
        # The score is evidence only when it came from the same design as the row.
        scan = self.scan_of(column) if self.basis_of(column) == basis else None
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
            "adjusted_for": list(self.adjusted_for(column, basis)),
            "adjustment": self.describe_basis(column, basis),
            "weight": basis.weight,
            "weight_kind": basis.weight_kind,
            "data": {"name": self.dataset.path.name, "sha256": self.data_sha256},
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
    adjust: tuple[str, ...] | list[str] = (),
    weight: str | None = None,
    weight_kind: str = FREQUENCY,
) -> ReviewSession:
    """Read the data and the log (or start an empty one), and build the covariates and
    weights every fit carries. Raises InputProblem."""
    data = Path(data)
    path = Path(log_path) if log_path is not None else default_log_path(data)
    if data.exists() and same_file(path, data):
        raise InputProblem(f"--log {path} is the data file; choose another name for the log")
    dataset = open_dataset(data, outcome, event, exclude)
    if not [c for c in dataset.columns if c != weight]:
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
    return ReviewSession(
        dataset,
        log,
        path,
        settings or ScanSettings(),
        warning,
        adjust=tuple(adjust),
        weight=weight,
        weight_kind=weight_kind if weight else None,
        data_sha256=sha,
    )

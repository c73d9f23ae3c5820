"""What one review holds: the data, the scan results so far, the designs of the fits, and
the recoding log (through the UI-free ``DecisionBook``, which saves each change before it
counts). The screens' own state (list order, typed numbers, draft notes) is a
``ReviewView`` they write; nothing here imports a screen library.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from tui.app.basis import Adjustments, Basis
from tui.app.view_state import ReviewView
from tui.engine.adjust import Adjustment
from tui.engine.compare import FormFit
from tui.engine.drift import training_deciles
from tui.engine.forms.base import MissingFill
from tui.engine.missing_group import (
    FillComparison,
    MissingGroup,
    compare_fills,
    missing_group,
    training_median,
)
from tui.engine.reduced_data import ReducedData
from tui.engine.scan import ColumnScan, ScanSettings
from tui.engine.stability import SelectionShares
from tui.intake.dataset import (
    ColumnarDataset,
    Dataset,
    file_sha256,
    open_dataset,
    require_numeric,
)
from tui.intake.profile import ColumnProfile, profile_column
from tui.intake.weights import FREQUENCY
from tui.recodings.decisions import (
    KEPT_LINEAR,
    RECODED,
    SET_ASIDE,
    UNDECIDED,
    Access,
    DecidedCounts,
    DecisionBook,
    Design,
    LogNotSaved,
    check_log_place,
    default_log_path,
    judged_evidence,
    open_log,
    take_log,
    with_selection,
)
from tui.recodings.evidence import DataFingerprint, Evidence
from tui.recodings.model import Decision, RecodingLog, SetAside, SourceInfo

__all__ = [
    "KEPT_LINEAR",
    "RECODED",
    "SET_ASIDE",
    "UNDECIDED",
    "LogNotSaved",
    "ReviewSession",
    "default_log_path",
    "open_session",
]


@dataclass
class ReviewSession:
    """The state of one review, shared by every screen."""

    dataset: Dataset | ColumnarDataset | ReducedData
    """The training data (rows with an outcome), or a source's counts (no rows)."""
    book: DecisionBook
    """The recoding log and every change to it (saved before it counts)."""
    settings: ScanSettings = field(default_factory=ScanSettings)
    """Groups and knots of the scan (and the starting ones of the inspection)."""
    source_warning: str | None = None
    """Set when the loaded log was written for different data."""
    ranked: list[ColumnScan] = field(default_factory=list)
    """Scan results so far, most non-linear first."""
    scan_finished: bool = False
    """Every column scored: q-values are final (a column's shape hint is final once its
    forms are fitted, ``ColumnScan.forms_fitted``; the second pass may still run)."""
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
    access_notice: str | None = None
    """Read-only, or a lock taken over: said once when the app opens."""
    view: ReviewView = field(default_factory=ReviewView)
    """The screens' state (list order, typed numbers, draft notes): written by the
    screens only, kept here so every screen of the review sees the same one."""

    def __post_init__(self) -> None:
        # A columnar file's profiles are read when a column is first shown: reading every
        # column before the list opens takes seconds at thousands of columns.
        self._profiles: dict[str, ColumnProfile] = (
            {}
            if isinstance(self.dataset, ColumnarDataset)
            else {n: self.dataset.profile(n) for n in self.dataset.columns}
            if isinstance(self.dataset, ReducedData)
            else {p.name: p for p in self.dataset.numeric}
        )
        self.adjustments = Adjustments(
            self.dataset, self.dataset.outcome.column, self.weight, self.weight_kind
        )
        # The first scan's covariates enter in the forms the log held at the start.
        self.base: Basis = self.adjustments.basis(self.adjust, self.book.forms())

    @property
    def log(self) -> RecodingLog:
        """The decisions as saved on disk."""
        return self.book.log

    @property
    def log_path(self) -> Path:
        """Where the log is saved."""
        return self.book.path

    @property
    def order(self) -> list[str]:
        """Columns in the order the list screen shows them (the screens' view state)."""
        return self.view.order

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
        found = self._profiles.get(column)
        if found is None:
            if column not in self.dataset.columns:
                raise KeyError(column)
            found = profile_column(self.dataset.series(column), column)
            self._profiles[column] = found
        return found

    def decision_word(self, column: str) -> str:
        """``undecided``, ``kept linear``, ``set aside`` or the accepted form."""
        return self.book.decision_word(column)

    def decision_words(self) -> dict[str, str]:
        """``decision_word`` of every column to review."""
        return {c: self.book.decision_word(c) for c in self.columns}

    def decision_phrase(self, column: str) -> str:
        """``undecided``, or ``decided: <what>``, for a line of text."""
        word = self.decision_word(column)
        return word if word == UNDECIDED else f"decided: {word}"

    def is_decided(self, column: str) -> bool:
        """Whether the log holds anything for the column."""
        return self.decision_word(column) != UNDECIDED

    def decided_count(self) -> int:
        """Columns of this data with a decision or set aside."""
        return self.counts().decided

    def counts(self) -> DecidedCounts:
        """Columns of this data recoded, kept linear and set aside."""
        return self.book.counts(self.columns)

    def start_settings(self, column: str) -> tuple[int, int]:
        """Groups and knots a column opens with: those its decision was judged with, else
        the scan's."""
        decision = self.log.decision_for(column)
        if decision is not None:
            return decision.evidence.groups, decision.evidence.knots
        return self.settings.groups, self.settings.knots

    def saved_note(self, column: str) -> str:
        """The note the log holds for the column ("" when none)."""
        return self.book.saved_note(column)

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
        return self.adjustments.basis(self.working_model(), self.book.forms())

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

    # --- decisions: the book saves each before it counts ---------------------------------

    def accept(
        self,
        column: str,
        row: FormFit,
        groups: int,
        knots: int,
        by_hand: bool = False,
        basis: Basis | None = None,
        note: str | None = None,
        shares: SelectionShares | None = None,
    ) -> Decision:
        """Record the form in ``row`` for ``column`` and save the log. ``basis`` is what the
        row was fitted with (default: the basis of the column's score); ``note`` defaults
        to the one the log holds; ``shares`` are the bootstrap shares shown beside the
        table (recorded in the evidence). Raises LogNotSaved."""
        if row.recoding is None:
            raise ValueError(f"{row.label} has no learned recoding to accept")
        profile = self.profile_of(column)
        if profile.minimum is None or profile.maximum is None:
            raise ValueError(f"{column} has no finite values")
        return self.book.accept(
            column,
            row.recoding,
            (profile.minimum, profile.maximum),
            self.saved_note(column) if note is None else note,
            self.evidence(column, row, groups, knots, by_hand, basis, shares),
            {str(c) for c in self.dataset.column_names},
            self.dataset.deciles(column)
            if isinstance(self.dataset, ReducedData)
            else training_deciles(self.dataset.values(column)),
        )

    def missing_group(self, column: str) -> MissingGroup | None:
        """The column's rows with a missing x, as a group (None when none is missing)."""
        if isinstance(self.dataset, ReducedData):
            return self.dataset.missing_group(column)
        return missing_group(self.dataset.raw_values(column), self.dataset.outcome.y)

    def training_median(self, column: str) -> float:
        """The median of the column's finite values (the fill proposed)."""
        if isinstance(self.dataset, ReducedData):
            return self.dataset.median(column)
        return training_median(self.dataset.raw_values(column))

    def preview_values(self, column: str) -> np.ndarray:
        """Values to show a recoding applied to: the first rows of a file; for a source,
        whose rows never leave the engine, the first distinct values (bin means when
        binned) from its counts."""
        if isinstance(self.dataset, ReducedData):
            return self.dataset.counts(column).x
        return self.dataset.values(column)

    @property
    def preview_from_rows(self) -> bool:
        """Whether ``preview_values`` are the first rows (a file) or values of a source's
        counts."""
        return not isinstance(self.dataset, ReducedData)

    @property
    def data_name(self) -> str:
        """The data file's name, or the source's label (no secret in it)."""
        if isinstance(self.dataset, ReducedData):
            return self.dataset.label
        return self.dataset.path.name

    def fill_comparison(self, column: str, fill: float | None = None) -> FillComparison | None:
        """The accepted form with a fill (default the training median), without and with a
        missing indicator, on every row with an outcome; None when nothing is missing or
        the column is undecided."""
        decision = self.log.decision_for(column)
        if decision is None:
            return None
        fill = self.training_median(column) if fill is None else fill
        if isinstance(self.dataset, ReducedData):
            return self.dataset.fill_comparison(column, decision.recoding, fill)
        x = self.dataset.raw_values(column)
        return compare_fills(decision.recoding, x, self.dataset.outcome.y, fill)

    def set_missing(self, column: str, rule: MissingFill | None) -> Decision:
        """Code the decided column's missing values by ``rule`` and save. Raises LogNotSaved."""
        return self.book.set_missing(column, rule, {str(c) for c in self.dataset.column_names})

    def set_aside(self, column: str, note: str | None = None) -> SetAside:
        """Record that the column is not to be used, and save the log."""
        return self.book.set_aside(column, self.saved_note(column) if note is None else note)

    def remove(self, column: str) -> str:
        """Remove whatever the log holds for the column and save; returns its note."""
        return self.book.remove(column)

    def undo(self) -> str | None:
        """Take back the review's last change to the log and save; returns it in words
        (None when nothing is left to undo). Raises LogNotSaved."""
        return self.book.undo()

    def set_note(self, column: str, note: str) -> bool:
        """Change the note of a decided column and save; False when nothing is recorded
        for it (the screens keep the note as a draft)."""
        return self.book.set_note(column, note)

    def evidence(
        self,
        column: str,
        row: FormFit,
        groups: int,
        knots: int,
        by_hand: bool,
        basis: Basis | None = None,
        shares: SelectionShares | None = None,
    ) -> Evidence:
        """What the screens showed when the form was accepted, and the covariates and
        weights it was judged with (evidence only: replay never reads them)."""
        basis = self.basis_of(column) if basis is None else basis
        # The score is evidence only when it came from the same design as the row.
        scan = self.scan_of(column) if self.basis_of(column) == basis else None
        if scan is not None and not scan.forms_fitted:
            scan = replace(scan, shape=None)  # a first-pass hint: no threshold seen yet
        design = Design(
            self.adjusted_for(column, basis),
            self.describe_basis(column, basis),
            basis.weight,
            basis.weight_kind,
        )
        shown = (
            self.dataset.name if isinstance(self.dataset, ReducedData) else self.dataset.path.name
        )
        data = DataFingerprint(shown, self.data_sha256)
        evidence = judged_evidence(
            row, groups, knots, by_hand, scan, self.scan_finished, design, data
        )
        return with_selection(evidence, shares)


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
    read_only: bool = False,
    take_over: bool = False,
    analyst: str | None = None,
) -> ReviewSession:
    """Lock the log (or open it ``read_only``), read the data and the log (or start an
    empty one), and build the covariates and weights every fit carries. Raises
    InputProblem (LogLocked when another review holds the log)."""
    data = Path(data)
    path = Path(log_path) if log_path is not None else default_log_path(data)
    check_log_place(path, data)
    access = take_log(path, read_only, take_over, analyst)
    try:
        dataset = open_dataset(data, outcome, event, exclude)
        require_numeric(dataset, weight)
        rows = int(dataset.outcome.keep.size)
        source = SourceInfo(name=data.name, rows=rows, sha256=file_sha256(data))
        return session_on_log(
            dataset, source, path, access, settings, adjust, weight, weight_kind, analyst
        )
    except BaseException:
        if access.lock is not None:
            access.lock.release()
        raise


def session_on_log(
    data: Dataset | ReducedData,
    source: SourceInfo,
    path: Path,
    access: Access,
    settings: ScanSettings | None,
    adjust: tuple[str, ...] | list[str],
    weight: str | None,
    weight_kind: str,
    analyst: str | None,
) -> ReviewSession:
    """Read the log held by ``access`` (or start an empty one) and build the session on
    ``data``; the caller releases the lock if this raises."""
    log, warning = open_log(path, data.outcome.column, data.outcome.event, source)
    book = DecisionBook(log, path, read_only=access.read_only, lock=access.lock)
    if analyst:
        book.analyst = analyst
    return ReviewSession(  # builds the covariates and weights: may refuse them
        data,
        book,
        settings or ScanSettings(),
        warning,
        adjust=tuple(adjust),
        weight=weight,
        weight_kind=weight_kind if weight else None,
        data_sha256=source.sha256,
        access_notice=access.notice,
    )

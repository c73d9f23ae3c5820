"""The shape every candidate form follows: learn numbers once, then apply them anywhere.

A *kind* (``Kind`` subclass) holds every fact about one form: its log key, how it applies
plain-number parameters to x, its output columns, its words and SQL, whether it nests
linear, what a search of its numbers costs and which notes it carries. A *candidate*
(``Candidate``) learns those parameters from reduced training counts, searching when the
form has a free cut point or power. What the candidate learns is a ``Recoding``: the kind
object itself, its parameters and an optional clip range. Applying a recoding needs
nothing but the recoding, so this module imports no form and no registry.
"""

from __future__ import annotations

import math
from abc import ABC, abstractmethod
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any, ClassVar

import numpy as np

from tui.engine.counts import ReducedCounts
from tui.engine.fitting import LogisticFit, fit_logistic


class RecodingError(ValueError):
    """Parameters that no recoding of this kind can hold (names the field)."""


def sql_number(value: float) -> str:
    """A float literal that round-trips exactly (repr of a Python float)."""
    if not math.isfinite(value):
        raise RecodingError(f"non-finite number {value!r} cannot be written as SQL")
    text = repr(float(value))
    # Parenthesise negatives so that "x - -1.5" can never read as a "--" comment.
    return f"({text})" if text.startswith("-") else text


NOTE_CUT = "data-driven cut point: p-value optimistic"
NOTE_POWER = "powers chosen from the data: p-value optimistic"
NOTE_DICHOTOMY = "dichotomising discards information"


class Kind(ABC):
    """One kind of recoding: how it applies its learned numbers and what it is.

    Kinds are compared by key, so a kind read back from a log or from another process
    equals the one a candidate learned.
    """

    key: ClassVar[str]
    """Stable key in the recoding log and in comparison tables (``spline``)."""
    label: ClassVar[str]
    """Display name without numbers (``FP2``); ``describe`` adds the numbers."""
    cut_based: ClassVar[bool] = False
    """The form splits x at cut points into groups (indicator, bands)."""
    dichotomises: ClassVar[bool] = False
    """One cut point turns x into two groups (indicator; bands are several groups)."""
    searched_df: ClassVar[int] = 0
    """Degrees of freedom a data-driven search of the numbers adds (cut point, powers)."""
    search_note: ClassVar[str | None] = None
    """Caution on a row whose numbers were searched."""
    search_includes_linear: ClassVar[bool] = False
    """Linear is one member of the search, so a searched fit nests linear whatever it picks."""

    def __eq__(self, other: object) -> bool:
        return isinstance(other, Kind) and other.key == self.key

    def __hash__(self) -> int:
        return hash(self.key)

    def __repr__(self) -> str:
        return f"<kind {self.key}>"

    def nests_linear(self, params: Mapping[str, Any]) -> bool:
        """x itself lies in the span of the outputs (with the intercept), so a
        likelihood-ratio test against linear applies."""
        return False

    def df(self, params: Mapping[str, Any], searched: bool = False) -> int:
        """Estimated numbers beyond the intercept: one per output, plus the search's."""
        return len(self.suffixes(params)) + (self.searched_df if searched else 0)

    def notes(self, searched: bool) -> list[str]:
        """Cautions on a fitted row of this kind."""
        notes = [self.search_note] if searched and self.search_note else []
        if self.dichotomises:
            notes.append(NOTE_DICHOTOMY)
        return notes

    def shows_threshold(self, form_coef: np.ndarray) -> bool:
        """The fitted coefficients of this form read as a step (a threshold shape)."""
        return False

    @abstractmethod
    def validate(self, params: Mapping[str, Any]) -> None:
        """Raise RecodingError naming the field when ``params`` are unusable."""

    @abstractmethod
    def apply(self, params: Mapping[str, Any], x: np.ndarray) -> np.ndarray:
        """Output columns (rows × outputs) for finite x."""

    def apply_many(self, params: Sequence[Mapping[str, Any]], x: np.ndarray) -> np.ndarray:
        """Outputs of many parameter sets on the same finite x (sets × rows × outputs), the
        same numbers as ``apply`` set by set; kinds that search override it to share work."""
        return np.stack([self.apply(p, x) for p in params])

    @abstractmethod
    def suffixes(self, params: Mapping[str, Any]) -> list[str]:
        """Suffixes of the output columns, in output order."""

    @abstractmethod
    def describe(self, params: Mapping[str, Any]) -> str:
        """A short readable label, e.g. ``spline, 4 knots``."""

    @abstractmethod
    def words(self, params: Mapping[str, Any]) -> str:
        """One sentence saying what the form computes from x, for model documentation."""

    @abstractmethod
    def sql(self, params: Mapping[str, Any], x: str, dialect: str) -> list[str]:
        """One SQL expression per output; ``x`` is an expression that is NULL when missing."""


def words_number(value: float) -> str:
    """A number as written in words: six significant digits."""
    return f"{float(value):.6g}"


def words_list(values: list[float]) -> str:
    """Numbers separated by commas."""
    return ", ".join(words_number(v) for v in values)


def words_shift(params: Mapping[str, Any]) -> str:
    """The shift in words ('' when there is none)."""
    s = float(params.get("shift", 0.0))
    return "" if s == 0 else f" after adding {words_number(s)} to every value"


def _finite_number(value: Any) -> bool:
    return isinstance(value, int | float) and math.isfinite(value)


def check_number(params: Mapping[str, Any], key: str) -> float:
    """A finite real number stored under ``key``."""
    if key not in params:
        raise RecodingError(f"params.{key} is missing")
    value = params[key]
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise RecodingError(f"params.{key} must be a number")
    if not math.isfinite(value):
        raise RecodingError(f"params.{key} must be finite")
    return float(value)


def check_sorted_numbers(params: Mapping[str, Any], key: str, minimum: int) -> list[float]:
    """A strictly increasing list of at least ``minimum`` finite numbers under ``key``."""
    if key not in params:
        raise RecodingError(f"params.{key} is missing")
    values = params[key]
    if not isinstance(values, list | tuple) or len(values) < minimum:
        raise RecodingError(f"params.{key} must be a list of at least {minimum} numbers")
    for i, v in enumerate(values):
        if isinstance(v, bool) or not isinstance(v, int | float) or not math.isfinite(v):
            raise RecodingError(f"params.{key}[{i}] must be a finite number")
    if any(b <= a for a, b in zip(values, values[1:], strict=False)):
        raise RecodingError(f"params.{key} must be strictly increasing")
    return [float(v) for v in values]


def check_shift(params: Mapping[str, Any]) -> float:
    """The shift of log and power forms: finite and not negative."""
    shift = check_number(params, "shift")
    if shift < 0:
        raise RecodingError("params.shift must not be negative")
    return shift


INDICATOR_SUFFIX = "missing"
"""Suffix of the missing-indicator output (``<column>__missing``)."""


@dataclass(frozen=True)
class MissingFill:
    """How a recoding treats a missing or non-finite x: replaced by ``fill`` before the
    clip and the kind apply, and with ``indicator`` one more output, 1 where x was missing."""

    fill: float
    """The value put in place of a missing x."""
    indicator: bool = False
    """Add a 0/1 output after the form's own outputs."""


@dataclass(frozen=True)
class Recoding:
    """A learned recoding: everything needed to apply it, as plain numbers."""

    form: Kind
    """The kind that applies these numbers (``make_recoding`` builds one from a key)."""
    params: Mapping[str, Any] = field(default_factory=dict)
    """Learned numbers (knots, shift, cut, edges, powers)."""
    clip: tuple[float, float] | None = None
    """When set, x is first limited to [lo, hi]."""
    missing: MissingFill | None = None
    """When set, a missing x is filled (and flagged) instead of giving missing outputs."""

    @property
    def kind(self) -> str:
        """Kind key, as written in the log (see ``KINDS``)."""
        return self.form.key

    def validate(self) -> None:
        """Raise RecodingError when the numbers are unusable."""
        self.form.validate(self.params)
        if self.clip is not None:
            lo, hi = self.clip
            if not (math.isfinite(lo) and math.isfinite(hi)) or lo > hi:
                raise RecodingError("clip must be two finite numbers, low ≤ high")
        fill = None if self.missing is None else self.missing.fill
        if fill is not None and (isinstance(fill, bool) or not _finite_number(fill)):
            raise RecodingError("missing.fill must be a finite number")

    def without_missing(self) -> Recoding:
        """The same recoding with missing x left missing (for complete-case fits)."""
        return replace(self, missing=None)

    def apply(self, x: np.ndarray) -> np.ndarray:
        """Output columns (rows × outputs); a missing x gives missing outputs unless the
        recoding fills it."""
        x = np.asarray(x, dtype=float)
        finite = np.isfinite(x)
        if self.missing is None and self.clip is None and x.ndim == 1 and finite.all():
            return self._apply_finite(x)
        was_missing = ~finite
        if self.missing is not None:
            x = np.where(was_missing, float(self.missing.fill), x)
        present = np.isfinite(x)
        out = np.full((x.size, len(self.form.suffixes(self.params))), np.nan)
        xv = x[present]
        if self.clip is not None:
            xv = np.clip(xv, self.clip[0], self.clip[1])
        if xv.size:
            with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
                out[present] = self.form.apply(self.params, xv)
        if self.missing is not None and self.missing.indicator:
            out = np.column_stack([out, was_missing.astype(float)])
        return out

    def _apply_finite(self, x: np.ndarray) -> np.ndarray:
        """``apply`` on a 1-D x that is finite throughout, neither filled nor clipped: the
        kind's outputs as they come (no mask to copy them through), in a C-ordered array
        of their own, as the masked copy gives."""
        width = len(self.form.suffixes(self.params))
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
            out = self.form.apply(self.params, x) if x.size else np.empty((0, width))
        if (
            isinstance(out, np.ndarray)
            and out.dtype == np.float64
            and out.shape == (x.size, width)
            and out.flags.c_contiguous
            and not np.may_share_memory(out, x)
        ):
            return out
        full = np.empty((x.size, width))
        full[...] = out
        return full

    def suffixes(self) -> list[str]:
        """Suffixes of the output columns (the missing indicator last, when there is one)."""
        own = self.form.suffixes(self.params)
        return own + [INDICATOR_SUFFIX] if self.missing and self.missing.indicator else own

    def outputs(self, column: str) -> list[str]:
        """Names of the output columns for source ``column``: ``<column>__<suffix>``."""
        return [f"{column}__{s}" for s in self.suffixes()]

    def describe(self) -> str:
        """Readable label."""
        text = self.form.describe(self.params)
        if self.clip is not None:
            text += f", clipped to [{self.clip[0]:.6g}, {self.clip[1]:.6g}]"
        if self.missing is not None:
            text += f", missing as {self.missing.fill:.6g}"
            text += " + indicator" if self.missing.indicator else ""
        return text

    def words(self) -> str:
        """One sentence saying what the recoding computes from x, clip included."""
        text = self.form.words(self.params)
        if self.clip is not None:
            lo, hi = (words_number(v) for v in self.clip)
            text += f"; x first limited to [{lo}, {hi}]"
        if self.missing is not None:
            text += f"; a missing x counts as {words_number(self.missing.fill)}"
            if self.missing.indicator:
                text += ", and a 0/1 output is 1 where x was missing"
        return text

    def sql(self, x: str, dialect: str = "duckdb", finite: str | None = None) -> list[str]:
        """One SQL expression per output, NULL when x is NULL unless the recoding fills it.

        ``finite`` is a condition true when x is a finite number (NULL or false otherwise);
        a missing-value fill and indicator use it, ``x IS NOT NULL`` when not given.
        """
        raw = x
        if self.missing is not None:
            test = finite or f"{x} IS NOT NULL"
            x = f"(CASE WHEN {test} THEN {x} ELSE {sql_number(self.missing.fill)} END)"
        if self.clip is not None:
            lo, hi = sql_number(self.clip[0]), sql_number(self.clip[1])
            x = f"LEAST(GREATEST({x}, {lo}), {hi})"
        if self.missing is not None:  # x is never NULL now, so no guard is needed
            exprs = self.form.sql(self.params, x, dialect)
            if self.missing.indicator:
                exprs.append(f"CASE WHEN {test} THEN 0.0 ELSE 1.0 END")
            return exprs
        # GREATEST and LEAST skip NULLs in most databases, so guard every output.
        return [
            f"CASE WHEN {raw} IS NULL THEN NULL ELSE {expr} END"
            for expr in self.form.sql(self.params, x, dialect)
        ]


@dataclass(frozen=True)
class Learned:
    """What a candidate learned: the recoding, and whether its numbers were searched."""

    recoding: Recoding
    """The learned recoding."""
    searched: bool = False
    """A cut point or power was chosen from the data (p-values optimistic)."""
    remarks: tuple[str, ...] = ()
    """What learning had to change from what was asked (e.g. fewer knots than asked)."""
    fit: LogisticFit | None = field(default=None, compare=False, repr=False)
    """The recoding's fit on the training counts when the search made it (the same fit
    ``fit_on_counts`` gives), so it is not fitted twice."""

    @property
    def df(self) -> int:
        """Estimated numbers beyond the intercept, searched cut points and powers included."""
        return self.recoding.form.df(self.recoding.params, self.searched)

    @property
    def nests_linear(self) -> bool:
        """Linear is a special case of what was learned (or of the search that chose it),
        so a likelihood-ratio test against linear applies."""
        form = self.recoding.form
        return form.nests_linear(self.recoding.params) or (
            self.searched and form.search_includes_linear
        )

    @property
    def notes(self) -> list[str]:
        """The kind's cautions on this row, after what learning had to change."""
        return [*self.remarks, *self.recoding.form.notes(self.searched)]


class Candidate(ABC):
    """A candidate form with its options; learns a recoding from training counts."""

    form: Kind
    """The kind this candidate learns (a class attribute on the fixed-kind candidates)."""

    @property
    def kind(self) -> str:
        """Kind key of what this candidate learns."""
        return self.form.key

    @property
    def key(self) -> str:
        """Key of this candidate's row in a comparison table: the kind key, unless the
        candidate carries a number of its own (``hinge@168.0``)."""
        return self.form.key

    @property
    def searches_many_fits(self) -> bool:
        """Learning fits the form many times over (tens of fits), so a row-level scan
        leaves it out."""
        return False

    @property
    @abstractmethod
    def label(self) -> str:
        """Readable name with options, e.g. ``spline, 4 knots``."""

    def search_options(self, counts: ReducedCounts) -> list[Recoding] | None:
        """The recodings a search of this candidate chooses among on ``counts`` (by
        likelihood, as ``search`` does); None for a candidate that searches nothing.
        Resampling re-runs the search over these (``engine/stability.py``)."""
        return None

    @abstractmethod
    def learn(self, counts: ReducedCounts) -> Learned:
        """Learn the numbers from training counts. Raises RecodingError when impossible."""


def design_matrix(recoding: Recoding, x: np.ndarray) -> np.ndarray:
    """Intercept column plus the recoding's outputs for finite x."""
    basis = recoding.apply(x)
    return np.column_stack([np.ones(basis.shape[0]), basis])


def fit_on_counts(
    recoding: Recoding, counts: ReducedCounts, design: np.ndarray | None = None
) -> LogisticFit:
    """Fit intercept + the recoding's outputs to training counts (``design``: that
    ``design_matrix`` of the counts' x, when already built)."""
    design = design_matrix(recoding, counts.x) if design is None else design
    if counts.covariates is not None:  # adjusted check: intercept, covariates, then the form
        design = np.column_stack([design[:, :1], counts.covariates, design[:, 1:]])
    if not np.all(np.isfinite(design)):
        raise RecodingError("the form gives non-finite values on the training data")
    return fit_logistic(design, counts.events, counts.trials, finite=True)

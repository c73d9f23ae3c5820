"""Triage of columns adjusted for fixed covariates, sharing the covariate work across columns.

Covariates tie every fit to the rows, so an adjusted scan fits each form on every row.
Here the covariate block is standardised and fitted alone once per set of covariates
(``adjusted_newton.CovariateBlock``); each column's linear fit starts from that fit, its
spline from the linear fit, and the other forms from the covariates-only fit. Knots,
shifts and band edges are learned from the column's counts per distinct value, which
give the same numbers as the rows themselves.

Two passes, each a pure function of its inputs:

- ``adjusted_scores``: linear and spline only, so the likelihood-ratio chi-square (the
  printed score), its p-value, the flags and the spline's shape are ready first;
- ``AdjustedScanner.complete``: the other triage forms, for the best form, its ΔAIC and
  the threshold hint (``AdjustedScanner.first_pass`` keeps what it reuses).

``adjusted_scan`` runs both per column. Its results are those of
``scan.scan_column`` with the same adjustment (the row-level reference path, which the
review screens keep using); tests compare the two and both against statsmodels.
"""

from __future__ import annotations

import multiprocessing
import signal
import threading
from collections.abc import Callable, Iterable, Iterator
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from dataclasses import dataclass, replace

import numpy as np

from tui.engine import flags as F
from tui.engine.adjust import Adjustment
from tui.engine.adjusted_newton import ColumnRows, CovariateBlock, covariate_block
from tui.engine.compare import ComparisonTable, FormFit, form_row
from tui.engine.counts import ReducedCounts, reduce_column
from tui.engine.fitting import LogisticFit, one_blas_thread
from tui.engine.forms.base import Candidate, Learned, Recoding, RecodingError
from tui.engine.forms.fracpoly import POWERS, Fp1Candidate
from tui.engine.forms.registry import triage_candidates
from tui.engine.forms.shift import learn_shift
from tui.engine.forms.spline import SPLINE
from tui.engine.heap import reuse_freed_memory
from tui.engine.robust_wald import LR
from tui.engine.scan import ColumnScan, ScanSettings, _shape_hint, scan_column
from tui.engine.shape import curve_shape
from tui.engine.values_test import SPLINE_TEST
from tui.intake.weights import SURVEY

LEARN_WITHOUT_FITS = frozenset({"linear", "log", "quadratic", "spline", "bands"})
"""Kinds whose candidates learn their numbers from counts alone (no search of fits)."""
STARTS_FROM_LINEAR = frozenset({"spline", "quadratic"})
"""Kinds whose first output is x itself, so the linear fit plus zeros starts them."""

COLLINEAR = "design columns collinear: too few distinct values for this form"
"""The note of a failed row whose design lost rank (the wording of ``compare``)."""

ValuesOf = Callable[[str], np.ndarray]
"""Returns a column's values (float, NaN for missing) aligned with the outcome."""


@dataclass(frozen=True, eq=False)
class FirstPass:
    """A column after the first pass: its scan row and what the second pass reuses."""

    scan: ColumnScan
    """Score, p-value, flags and spline shape; best form and ΔAIC not yet set."""
    fits: tuple[FormFit, ...] = ()
    """The linear and spline rows (empty when the column is not scored)."""
    linear_start: np.ndarray | None = None
    """The linear fit on the standardised scale (starts the forms that extend it)."""


class AdjustedScanner:
    """Scans columns against one outcome and one adjustment, keeping the covariate
    blocks (one per set of covariates: a covariate scanned itself leaves itself out)."""

    def __init__(
        self, y: np.ndarray, adjust: Adjustment, settings: ScanSettings = ScanSettings()
    ) -> None:
        self.y = np.asarray(y, dtype=float)
        self.adjust = adjust
        self.settings = settings
        self.candidates = triage_candidates(settings.groups, settings.knots, False)
        self._blocks: dict[tuple[str, ...], CovariateBlock] = {}
        reuse_freed_memory()  # row-sized temporaries in every step (engine.heap)

    def handles(self, column: str) -> bool:
        """The column has covariates to be adjusted for (else the counts path serves it).

        Survey weights are rescaled over each column's own rows, so their covariate block
        cannot be shared: such columns take the row-level path."""
        if self.adjust.weights is not None and self.adjust.weight_kind == SURVEY:
            return False
        return self.adjust.covariates_for(column) is not None

    def block(self, column: str) -> CovariateBlock:
        """The covariate block of this column's fits, made once per set of covariates."""
        design = self.adjust.covariates_for(column)
        if design is None:
            raise ValueError(f"column {column!r} has no covariates to adjust for")
        if design.labels not in self._blocks:
            self._blocks[design.labels] = covariate_block(
                design.matrix, self.y, self.adjust.weights
            )
        return self._blocks[design.labels]

    def first(self, column: str, x: np.ndarray) -> tuple[FirstPass, _Column | None]:
        """Profile, linear and spline fits of one column."""
        state = _Column.of(column, np.asarray(x, dtype=float), self)
        base = state.profile()
        if not state.scorable:
            return FirstPass(base), None
        linear = state.fit_row(self.candidates[0], None)
        spline_candidate = next(c for c in self.candidates if c.form == SPLINE)
        spline = state.fit_row(spline_candidate, linear)
        first = FirstPass(state.summarise(base, (linear, spline), final=False), (linear, spline),
                          state.starts.get("linear"))  # fmt: skip
        return first, state

    def second(self, first: FirstPass, state: _Column) -> ColumnScan:
        """Every other triage form; the finished scan row."""
        if not first.fits:
            return first.scan
        linear, spline = first.fits
        if first.linear_start is not None:
            state.starts["linear"] = first.linear_start
        rows = []
        for candidate in self.candidates:
            if candidate.kind == "linear":
                rows.append(linear)
            elif candidate.form == SPLINE:
                rows.append(spline)
            else:
                rows.append(state.fit_row(candidate, linear))
        return state.summarise(first.scan, tuple(rows), final=True)

    def first_pass(self, column: str, x: np.ndarray) -> FirstPass:
        """First pass of one column: ``.scan`` holds its score; keep the whole for
        ``complete``."""
        return self.first(column, x)[0]

    def complete(self, column: str, x: np.ndarray, first: FirstPass) -> ColumnScan:
        """Second pass, any time after the first: the other forms, the best form, ΔAIC
        and the threshold hint, reusing the first pass's linear and spline fits."""
        if not first.fits:
            return first.scan
        return self.second(first, _Column.of(column, np.asarray(x, dtype=float), self))

    def scan(self, column: str, x: np.ndarray) -> ColumnScan:
        """Both passes for one column."""
        first, state = self.first(column, x)
        return first.scan if state is None else self.second(first, state)


def adjusted_scores(
    columns: Iterable[str],
    values_of: ValuesOf,
    y: np.ndarray,
    adjust: Adjustment,
    settings: ScanSettings = ScanSettings(),
) -> Iterator[ColumnScan]:
    """First pass: the likelihood-ratio score (spline against linear, covariates in both),
    p-value, flags and shape of each column, in order; best form and ΔAIC left empty."""
    scanner = AdjustedScanner(y, adjust, settings)
    for column in columns:
        yield scanner.first(column, values_of(column))[0].scan


def adjusted_scan(
    columns: Iterable[str],
    values_of: ValuesOf,
    y: np.ndarray,
    adjust: Adjustment,
    settings: ScanSettings = ScanSettings(),
) -> Iterator[ColumnScan]:
    """Both passes per column, in order: the same rows as ``scan_column`` would give."""
    scanner = AdjustedScanner(y, adjust, settings)
    for column in columns:
        yield scanner.scan(column, values_of(column))


class _Column:
    """One column's rows, counts and fits while it is being scanned."""

    def __init__(
        self,
        column: str,
        x: np.ndarray,
        scanner: AdjustedScanner,
        rows: ColumnRows,
        counts: ReducedCounts,
    ) -> None:
        self.column, self.x_all, self.scanner = column, x, scanner
        self.rows, self.counts = rows, counts
        self.starts: dict[str, np.ndarray] = {}
        self.fits: dict[tuple[str, object], LogisticFit] = {}

    @staticmethod
    def of(column: str, x: np.ndarray, scanner: AdjustedScanner) -> _Column:
        rows = ColumnRows.of(scanner.block(column), x)
        # Counts per distinct value of the used rows: knots, shifts and edges learned
        # from them equal those learned from the rows (weighted type 7 quantiles).
        weights = None if scanner.adjust.weights is None else rows.trials
        outcome = rows.events if weights is None else rows.events / rows.trials
        counts = reduce_column(rows.x, outcome, weights, max_levels=rows.x.size + 1)
        return _Column(column, x, scanner, rows, counts)

    @property
    def scorable(self) -> bool:
        c = self.counts
        return not (c.distinct_values <= 2 or c.total_events == 0 or c.total_events == c.rows)

    def profile(self) -> ColumnScan:
        """The column's figures and profile flags, as ``scan_counts`` gives them."""
        x, counts, adjust = self.x_all, self.counts, self.scanner.adjust
        rows = int(x.size) if adjust.weights is None else int((adjust.weights > 0).sum())
        n = int(self.rows.x.size)
        nonfinite = int(np.isinf(x).sum())
        finite = x[np.isfinite(x)]
        whole = bool(finite.size) and bool(np.all(np.floor(finite) == finite))
        flags = F.profile_flags(rows, n, counts.distinct_values, nonfinite, whole, counts.minimum)
        return ColumnScan(
            column=self.column,
            rows=rows,
            n=n,
            missing=rows - n,
            events=int(np.count_nonzero(self.rows.events > 0)),  # rows, like n
            distinct=counts.distinct_values,
            flags=tuple(flags),
            minimum=counts.minimum,
            maximum=counts.maximum,
            exact=True,
            adjusted_for=adjust.adjusted_for(self.column),
            weight=adjust.weight_column,
            weight_kind=None if adjust.weights is None else adjust.weight_kind,
            weighted_n=None if adjust.weights is None else counts.rows,
            weighted_events=None if adjust.weights is None else counts.total_events,
        )

    def _fit(self, kind: str, recoding: Recoding) -> LogisticFit:
        basis = _basis(recoding, self.rows.x)
        if not np.all(np.isfinite(basis)):
            raise RecodingError("the form gives non-finite values on the training data")
        start = None
        if kind in STARTS_FROM_LINEAR and "linear" in self.starts:
            linear = self.starts["linear"]
            start = np.concatenate([linear, np.zeros(basis.shape[1] - 1)])
        fit, beta = self.rows.fit(basis, start)
        if kind == "linear" and beta is not None:
            self.starts["linear"] = beta
        self.fits[(kind, recoding.params.get("shift"))] = fit
        return fit

    def _fp1_reused(self, power: float, shift: float) -> LogisticFit | None:
        """FP1 with power 1 is the linear model and power 0 the log model (same shift):
        their fits serve, the intercept moved by the shift for power 1."""
        if power == 1.0 and ("linear", None) in self.fits:
            linear = self.fits[("linear", None)]
            coef = linear.coef.copy()
            coef[0] -= coef[-1] * shift
            return replace(linear, coef=coef)
        if power == 0.0 and ("log", shift) in self.fits:
            return self.fits[("log", shift)]
        return None

    def _learn_and_fit(self, candidate: Candidate) -> tuple[Learned, LogisticFit]:
        if isinstance(candidate, Fp1Candidate):
            return self._fp1_search()
        if candidate.kind not in LEARN_WITHOUT_FITS:
            raise RecodingError(f"{candidate.label} is not part of an adjusted triage")
        learned = candidate.learn(self.counts)
        return learned, self._fit(candidate.kind, learned.recoding)

    def _fp1_search(self) -> tuple[Learned, LogisticFit]:
        """The power with the highest likelihood (first wins ties), as ``forms.search``.
        The powers not served by the linear and log fits are fitted together."""
        shift = learn_shift(self.counts)
        recodings = {p: Recoding(Fp1Candidate.form, {"power": p, "shift": shift}) for p in POWERS}
        fits: dict[float, LogisticFit] = {}
        bases: dict[float, np.ndarray] = {}
        for power, recoding in recodings.items():
            reused = self._fp1_reused(power, shift)
            if reused is not None:
                fits[power] = reused
                continue
            basis = _basis(recoding, self.rows.x)
            if np.all(np.isfinite(basis)):  # else the power is left out, as a failed fit
                bases[power] = basis
        if bases:
            together = self.rows.fit_many(list(bases.values()))
            for power, (fit, _) in zip(bases, together, strict=True):
                fits[power] = fit
        best: tuple[bool, float, Recoding, LogisticFit] | None = None
        for power in POWERS:
            if power not in fits:
                continue
            fit = fits[power]
            key = (fit.ok, fit.llf)
            if best is None or key[0] > best[0] or (key[0] == best[0] and key[1] > best[1] + 1e-9):
                best = (fit.ok, fit.llf, recodings[power], fit)
        if best is None:
            raise RecodingError("no member of the search could be fitted")
        return Learned(best[2], searched=True), best[3]

    def fit_row(self, candidate: Candidate, linear: FormFit | None) -> FormFit:
        """One row of the comparison table, as ``compare.fit_candidate`` makes it."""
        try:
            learned, fit = self._learn_and_fit(candidate)
        except (RecodingError, ValueError, np.linalg.LinAlgError) as problem:
            return _failed(candidate, str(problem))
        if fit.rank_deficient:
            return _failed(
                candidate, "design columns collinear: too few distinct values for this form"
            )
        c = self.rows.block.width - 1
        level = float(self.rows.covariate_means @ fit.coef[1 : 1 + c]) if c else 0.0
        return form_row(candidate, learned, fit, self.counts, linear, c, level)

    def summarise(self, base: ColumnScan, rows: tuple[FormFit, ...], final: bool) -> ColumnScan:
        """Flags, score and shape from the fitted rows, as ``scan_counts`` sets them.

        The first pass has linear and spline only: best form and ΔAIC wait for the
        second, and so does the threshold hint (it asks whether the best form is a step).
        """
        settings = self.scanner.settings
        table = ComparisonTable(rows, None)
        linear, spline = table.linear, table.row(SPLINE.key)
        flags = list(base.flags)
        if not final:
            if any(r.status == "separation" for r in (linear, spline) if r is not None):
                flags.append(F.SEPARATION)
            elif any(r.status == "not-converged" for r in (linear, spline) if r is not None):
                flags.append(F.NOT_CONVERGED)
            minority = min(self.counts.total_events, self.counts.rows - self.counts.total_events)
            if minority < 10 * (settings.knots - 1):
                flags.append(F.LOW_EVENTS)
        result = replace(base, flags=tuple(flags))
        if final:
            best = table.best()
            result = replace(
                result,
                best_form=best.recoding.describe() if best and best.recoding else None,
                delta_aic=(best.aic - linear.aic) if best and linear.status == "ok" else None,
            )
        usable = not (spline is None or spline.status != "ok" or linear.status != "ok")
        if not usable or spline.lr_df is None:
            return result
        if final:
            return replace(result, shape=_shape_hint(table, self.counts))
        lo, hi = self.counts.quantile([0.025, 0.975])
        grid = np.linspace(lo, hi, 201)
        return replace(
            result,
            score=spline.lr_chi2,
            df=spline.lr_df,
            p_value=spline.lr_p,
            score_test=SPLINE_TEST,
            statistic=LR,  # survey weights never take this path (``handles``)
            shape=curve_shape(grid, spline.log_odds(grid)),
        )


def _basis(recoding: Recoding, x: np.ndarray) -> np.ndarray:
    """``recoding.apply`` on x that is finite on every row: a triage candidate has no clip
    and no fill, so the form's own columns serve, without the copy into a NaN frame."""
    if recoding.clip is not None or recoding.missing is not None:
        return recoding.apply(x)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        return np.asarray(recoding.form.apply(recoding.params, x), dtype=float).reshape(x.size, -1)


def _failed(candidate: Candidate, problem: str) -> FormFit:
    return FormFit(
        candidate.key, candidate.label, candidate.form, None, 0, "failed", notes=(problem,)
    )


def scan_adjusted(
    columns: Iterable[str],
    values_of: ValuesOf,
    y: np.ndarray,
    adjust: Adjustment,
    settings: ScanSettings = ScanSettings(),
    workers: int = 1,
) -> Iterator[ColumnScan]:
    """Every column of an adjusted scan (both passes), as ``runner.scan_columns`` yields.

    A column left without covariates (the only covariate, scanned itself) takes the counts
    path of ``scan_column``. With ``workers`` above 1, and when this process runs a single
    thread, forked worker processes share the covariate block made here and scan a column
    at a time each, results arriving as they finish; otherwise columns are scanned here,
    in order.
    """
    names = list(columns)
    scanner = AdjustedScanner(y, adjust, settings)
    for name in names:  # the shared block, made once before any worker starts
        if scanner.handles(name):
            scanner.block(name)
            break
    count = min(max(1, workers), len(names))
    methods = multiprocessing.get_all_start_methods()
    if count <= 1 or "fork" not in methods or threading.active_count() > 1:
        with one_blas_thread():
            for name in names:
                yield _scan_one(scanner, name, values_of)
        return
    context = multiprocessing.get_context("fork")
    executor = ProcessPoolExecutor(
        count, context, initializer=_inherit, initargs=(scanner, values_of)
    )
    pending: set[Future[ColumnScan]] = set()
    try:
        for name in names:
            pending.add(executor.submit(_scan_inherited, name))
            if len(pending) >= 2 * count:
                done, pending = wait(pending, return_when=FIRST_COMPLETED)
                for finished in done:
                    yield finished.result()
        while pending:
            done, pending = wait(pending, return_when=FIRST_COMPLETED)
            for finished in done:
                yield finished.result()
    finally:
        executor.shutdown(wait=not pending, cancel_futures=True)


def _scan_one(scanner: AdjustedScanner, name: str, values_of: ValuesOf) -> ColumnScan:
    x = values_of(name)
    if scanner.handles(name):
        return scanner.scan(name, x)
    return scan_column(name, x, scanner.y, scanner.settings, scanner.adjust)[0]


_INHERITED: tuple[AdjustedScanner, ValuesOf] | None = None


def _inherit(scanner: AdjustedScanner, values_of: ValuesOf) -> None:
    """Worker start (fork): keep the scanner (and its covariate block) and the reader."""
    global _INHERITED
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C is the parent's to handle
    _INHERITED = (scanner, values_of)


def _scan_inherited(name: str) -> ColumnScan:
    assert _INHERITED is not None, "worker started without the parent's scanner"
    with one_blas_thread():
        scanner, values_of = _INHERITED
        return _scan_one(scanner, name, values_of)

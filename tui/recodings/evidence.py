"""What a decision was judged on, as named fields: the log's ``evidence`` object, typed.

The log writes evidence as plain JSON under the keys listed in ``KEYS`` (unchanged since
the format's first version). Logs written by earlier versions, or by other tools, may hold
only some of them: ``Evidence.from_json`` reads each key that is there and gives each one
that is not the default its field's docstring names. ``recorded`` keeps which keys the
entry held, so a log read and written again keeps exactly its keys, and readers can tell a
figure that was recorded from a default. Keys this version does not know are kept in
``extra`` and written back unchanged. Replay never reads evidence.
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from numbers import Integral, Real
from typing import Any

from tui.engine.robust_wald import LR
from tui.engine.scan import ScanSettings
from tui.recodings.errors import EntryProblem

DEFAULT_GROUPS = ScanSettings().groups
"""Groups of an entry that did not record them: the scan's default."""
DEFAULT_KNOTS = ScanSettings().knots
"""Knots of an entry that did not record them: the scan's default."""

ROW_KEYS = ("form", "df", "deviance", "aic", "delta_aic", "lr_p", "notes", "by_hand")
SCORE_KEYS = ("score", "score_df", "score_p", "score_statistic", "q_value", "shape")
KEYS = (
    *ROW_KEYS,
    "groups",
    "knots",
    *SCORE_KEYS,
    "adjusted_for",
    "adjustment",
    "weight",
    "weight_kind",
    "data",
    "selection",
    "bendwise_version",
)
"""Every evidence key this version writes (``bendwise_version`` and ``score_statistic``
came after the others: older evidence lacks them)."""


@dataclass(frozen=True)
class RowFigures:
    """The accepted row of the candidate table, as the column screen showed it."""

    form: str | None = None
    """The candidate's label (e.g. ``spline, 4 knots``); None when not recorded."""
    df: int | None = None
    """Parameters of the form; None when not recorded."""
    deviance: float | None = None
    """Deviance of the fit; None when not recorded or not a number."""
    aic: float | None = None
    """AIC of the fit; None when not recorded or not a number."""
    delta_aic: float | None = None
    """AIC minus the linear form's; None when not recorded or not a number."""
    lr_p: float | None = None
    """Likelihood-ratio p against linear; None when the form does not nest linear, or
    when not recorded."""
    notes: tuple[str, ...] = ()
    """The engine's notes on the row; empty when not recorded."""
    by_hand: bool = False
    """The form came from a number typed by hand; False when not recorded."""


@dataclass(frozen=True)
class ScoreFigures:
    """The column's non-linearity score shown when the form was accepted."""

    statistic: float | None = None
    """Spline-against-linear chi-square (key ``score``); None when the score shown came
    from another design than the row, or when not recorded."""
    df: int | None = None
    """Its degrees of freedom (key ``score_df``); None as for ``statistic``."""
    p: float | None = None
    """Its p-value (key ``score_p``); None as for ``statistic``."""
    test: str = LR
    """Which statistic the score is (key ``score_statistic``): ``LR``, ``Wald (robust)``
    (survey weights, sandwich covariance) or ``LR (approximate)``; ``LR`` when not recorded
    (logs written before the key existed scored by likelihood ratio)."""
    q_value: float | None = None
    """Benjamini–Hochberg q-value; None before the scan ended, or when not recorded."""
    shape: str | None = None
    """Shape hint; None before the scan ended, or when not recorded."""


@dataclass(frozen=True)
class Weights:
    """The row weights in every fit (keys ``weight`` and ``weight_kind``)."""

    column: str | None = None
    """Weight column; None for unweighted fits, and when not recorded."""
    kind: str | None = None
    """``frequency`` or ``survey``; None without weights, and when not recorded."""


@dataclass(frozen=True)
class DataFingerprint:
    """The data file the decision was judged on (key ``data``)."""

    name: str
    """File name (no folders)."""
    sha256: str | None
    """SHA-256 of its bytes; None when it was not computed."""


@dataclass(frozen=True)
class Selection:
    """Bootstrap selection shares of the candidate table (key ``selection``): how often
    each form had the lowest AIC across resamples (Sauerbrei & Schumacher 1992)."""

    resamples: int
    """Resamples drawn."""
    seed: int
    """Seed of the resampling (the same seed on the same data gives the same shares)."""
    shares: Mapping[str, float]
    """Share of resamples won, by the table's row key (``spline``, ``hinge@168.0``)."""

    def to_json(self) -> dict[str, Any]:
        """As written in the log."""
        return {"resamples": self.resamples, "seed": self.seed, "shares": dict(self.shares)}


@dataclass(frozen=True)
class Evidence(Mapping[str, Any]):
    """What the screens showed when a form was accepted, and the design it was judged in.

    Also a read-only mapping of the JSON form (``evidence["score"]``), for readers of the
    document; bendwise's own code reads the fields.
    """

    row: RowFigures = field(default_factory=RowFigures)
    """The accepted table row's figures."""
    groups: int = DEFAULT_GROUPS
    """Quantile groups on screen; the scan's default (4) when not recorded."""
    knots: int = DEFAULT_KNOTS
    """Spline knots on screen; the scan's default (4) when not recorded."""
    score: ScoreFigures = field(default_factory=ScoreFigures)
    """The column's score, from the same design as the row."""
    adjusted_for: tuple[str, ...] = ()
    """Covariates in the fits (key ``adjusted_for``); empty when not recorded."""
    adjustment: str | None = None
    """How each covariate and the weights entered, in words (e.g. ``adjusted for age
    (linear)``, ``unadjusted``); None when not recorded."""
    weights: Weights = field(default_factory=Weights)
    """Row weights of the fits."""
    data: DataFingerprint | None = None
    """The data the decision was judged on; None when not recorded."""
    selection: Selection | None = None
    """Bootstrap selection shares shown when the form was accepted; None when they were
    not computed (adjusted checks, accepted before they were in) or not recorded (logs
    written before this key existed)."""
    version: str | None = None
    """The bendwise version that made the decision (key ``bendwise_version``); None when
    not recorded, as in logs of versions before it was kept."""
    recorded: frozenset[str] = frozenset(KEYS)
    """The keys the log entry holds (all of ``KEYS`` for evidence bendwise writes now)."""
    extra: Mapping[str, Any] = field(default_factory=dict)
    """Keys this version does not know, as read (written back unchanged)."""

    def holds(self, key: str) -> bool:
        """Whether the entry recorded ``key`` (one of ``KEYS``)."""
        return key in self.recorded

    def to_json(self) -> dict[str, Any]:
        """The evidence as JSON values, with the keys it was recorded with."""
        r, s, w = self.row, self.score, self.weights
        data = None if self.data is None else {"name": self.data.name, "sha256": self.data.sha256}
        every: dict[str, Any] = {
            "form": r.form,
            "df": r.df,
            "deviance": r.deviance,
            "aic": r.aic,
            "delta_aic": r.delta_aic,
            "lr_p": r.lr_p,
            "notes": list(r.notes),
            "by_hand": r.by_hand,
            "groups": self.groups,
            "knots": self.knots,
            "score": s.statistic,
            "score_df": s.df,
            "score_p": s.p,
            "score_statistic": None if s.statistic is None else s.test,
            "q_value": s.q_value,
            "shape": s.shape,
            "adjusted_for": list(self.adjusted_for),
            "adjustment": self.adjustment,
            "weight": w.column,
            "weight_kind": w.kind,
            "data": data,
            "selection": None if self.selection is None else self.selection.to_json(),
            "bendwise_version": self.version,
        }
        return {**{k: v for k, v in every.items() if k in self.recorded}, **self.extra}

    @classmethod
    def from_json(cls, document: Mapping[str, Any], where: str = "evidence") -> Evidence:
        """Read a log's evidence object; a missing key gets its documented default.
        Raises EntryProblem naming the key whose value has the wrong type."""
        read = _Reader(document, where)
        row = RowFigures(
            form=read.text("form"),
            df=read.whole("df"),
            deviance=read.number("deviance"),
            aic=read.number("aic"),
            delta_aic=read.number("delta_aic"),
            lr_p=read.number("lr_p"),
            notes=read.texts("notes"),
            by_hand=read.flag("by_hand"),
        )
        score = ScoreFigures(
            statistic=read.number("score"),
            df=read.whole("score_df"),
            p=read.number("score_p"),
            test=read.text("score_statistic") or LR,
            q_value=read.number("q_value"),
            shape=read.text("shape"),
        )
        groups, knots = read.whole("groups"), read.whole("knots")
        return cls(
            row=row,
            groups=DEFAULT_GROUPS if groups is None else groups,
            knots=DEFAULT_KNOTS if knots is None else knots,
            score=score,
            adjusted_for=read.texts("adjusted_for"),
            adjustment=read.text("adjustment"),
            weights=Weights(read.text("weight"), read.text("weight_kind")),
            data=read.fingerprint("data"),
            selection=read.selection("selection"),
            version=read.text("bendwise_version"),
            recorded=frozenset(k for k in KEYS if k in document),
            extra={k: v for k, v in document.items() if k not in KEYS},
        )

    # --- the JSON view ------------------------------------------------------------------

    def __getitem__(self, key: str) -> Any:
        return self.to_json()[key]

    def __iter__(self) -> Iterator[str]:
        return iter(self.to_json())

    def __len__(self) -> int:
        return len(self.to_json())


NOTHING = Evidence(recorded=frozenset())
"""Evidence of a decision that recorded none (written as ``{}``)."""


class _Reader:
    """Typed reads of one evidence object; None for a key that is absent or null."""

    def __init__(self, document: Mapping[str, Any], where: str) -> None:
        self._doc, self._where = document, where

    def _bad(self, key: str, wanted: str) -> EntryProblem:
        return EntryProblem(f"{self._where}.{key}", f"must be {wanted}, not {self._doc[key]!r}")

    def number(self, key: str) -> float | None:
        value = self._doc.get(key)
        if value is None:
            return None
        if isinstance(value, bool) or not isinstance(value, Real):
            raise self._bad(key, "a number or null")
        number = float(value)
        return number if math.isfinite(number) else None  # not computed: shown as missing

    def whole(self, key: str) -> int | None:
        value = self._doc.get(key)
        if value is None:
            return None
        if isinstance(value, Integral) and not isinstance(value, bool):
            return int(value)
        if isinstance(value, Real) and not isinstance(value, bool) and float(value).is_integer():
            return int(value)
        raise self._bad(key, "a whole number or null")

    def text(self, key: str) -> str | None:
        value = self._doc.get(key)
        if value is None or isinstance(value, str):
            return value
        raise self._bad(key, "a string or null")

    def texts(self, key: str) -> tuple[str, ...]:
        value = self._doc.get(key)
        if value is None:
            return ()
        if isinstance(value, list | tuple) and all(isinstance(v, str) for v in value):
            return tuple(str(v) for v in value)
        raise self._bad(key, "a list of strings")

    def flag(self, key: str) -> bool:
        value = self._doc.get(key, False)
        if isinstance(value, bool):
            return value
        raise self._bad(key, "true or false")

    def selection(self, key: str) -> Selection | None:
        value = self._doc.get(key)
        if value is None:
            return None
        wanted = '{"resamples": n, "seed": n, "shares": {form: share}}'
        if not isinstance(value, Mapping) or set(value) != {"resamples", "seed", "shares"}:
            raise self._bad(key, wanted)
        counts = value["resamples"], value["seed"]
        shares = value["shares"]
        whole = all(isinstance(v, Integral) and not isinstance(v, bool) and v >= 0 for v in counts)
        if not whole or not isinstance(shares, Mapping):
            raise self._bad(key, wanted)
        for form, share in shares.items():
            if not isinstance(form, str) or isinstance(share, bool) or not isinstance(share, Real):
                raise self._bad(key, wanted)
            if not 0 <= float(share) <= 1:
                raise self._bad(key, wanted)
        return Selection(int(counts[0]), int(counts[1]), {k: float(v) for k, v in shares.items()})

    def fingerprint(self, key: str) -> DataFingerprint | None:
        value = self._doc.get(key)
        if value is None:
            return None
        sha = value.get("sha256") if isinstance(value, Mapping) else None
        if (
            not isinstance(value, Mapping)
            or not isinstance(value.get("name"), str)
            or not (sha is None or isinstance(sha, str))
        ):
            raise self._bad(key, 'an object {"name": ..., "sha256": ...}')
        return DataFingerprint(str(value["name"]), sha)

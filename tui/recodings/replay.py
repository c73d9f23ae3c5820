"""Apply a recoding log to a data frame: the same numbers, the same outputs, no refitting."""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from tui.intake.profile import is_numeric_column, numeric_values
from tui.names import closest_names
from tui.problems import InputProblem
from tui.recodings.model import Decision, RecodingLog

if TYPE_CHECKING:
    import pandas as pd


@dataclass(frozen=True)
class RangeExcess:
    """Values of one source column outside the training range of its recoding."""

    column: str
    """Source column."""
    range: tuple[float, float]
    """Training minimum and maximum recorded in the log."""
    below: int
    """Values under the training minimum."""
    above: int
    """Values over the training maximum."""
    lowest: float
    """Smallest value present."""
    highest: float
    """Largest value present."""
    clip: tuple[float, float] | None = None
    """The recoding's clip range, when it has one."""

    def describe(self) -> str:
        """One line, e.g. ``crp_mg_l: 6 values above the training range [0.2, 246.8] ...``."""
        lo, hi = self.range
        if self.below and self.above:
            count = f"{_values(self.below)} below and {self.above} above"
        elif self.below:
            count = f"{_values(self.below)} below"
        else:
            count = f"{_values(self.above)} above"
        seen = []
        if self.below:
            seen.append(f"lowest {self.lowest:.6g}")
        if self.above:
            seen.append(f"highest {self.highest:.6g}")
        text = f"{self.column}: {count} the training range [{lo:.6g}, {hi:.6g}] ({', '.join(seen)})"
        if self.clip is not None:
            text += f", limited to [{self.clip[0]:.6g}, {self.clip[1]:.6g}] by the recoding's clip"
        return text


def _values(count: int) -> str:
    return "1 value" if count == 1 else f"{count} values"


def check_columns(log: RecodingLog, frame: pd.DataFrame, data_name: str = "the data") -> None:
    """Raise InputProblem naming every source column missing from ``frame`` or not numeric,
    and every output name that ``frame`` already uses."""
    present = [str(c) for c in frame.columns]
    missing, not_numeric, clashes = [], [], []
    for decision in log.decisions:
        if decision.column not in frame.columns:
            near = closest_names(decision.column, present, limit=1)
            hint = f" (closest: '{near[0]}')" if near else ""
            missing.append(f"'{decision.column}'{hint}")
        elif not is_numeric_column(frame[decision.column]):
            not_numeric.append(f"'{decision.column}' ({frame[decision.column].dtype})")
        clashes.extend(f"'{name}'" for name in decision.outputs if name in frame.columns)
    parts = []
    if missing:
        parts.append(f"missing column(s) {', '.join(missing)}")
    if not_numeric:
        parts.append(f"not numeric: {', '.join(not_numeric)}")
    if clashes:
        parts.append(f"already has column(s) named like outputs: {', '.join(clashes)}")
    if parts:
        raise InputProblem(f"cannot replay on {data_name}: {'; '.join(parts)}")


def range_excess(log: RecodingLog, frame: pd.DataFrame) -> list[RangeExcess]:
    """Columns with values outside their training range, in log order."""
    found = []
    for decision in log.decisions:
        x = numeric_values(frame[decision.column])
        x = x[np.isfinite(x)]
        lo, hi = decision.range
        below, above = int(np.sum(x < lo)), int(np.sum(x > hi))
        if below or above:
            found.append(
                RangeExcess(
                    decision.column,
                    (lo, hi),
                    below,
                    above,
                    float(x.min()),
                    float(x.max()),
                    decision.recoding.clip,
                )
            )
    return found


def recode(decision: Decision, values: pd.Series) -> pd.DataFrame:
    """The output columns of one decision for one source column (missing x → missing)."""
    import pandas as pd

    basis = decision.recoding.apply(numeric_values(values))
    return pd.DataFrame(basis, columns=list(decision.outputs), index=values.index)


def apply_to_frame(
    log: RecodingLog, frame: pd.DataFrame, data_name: str = "the data"
) -> pd.DataFrame:
    """``frame`` with every output of the log added after its own columns (a new frame).

    Raises InputProblem when a source column is missing or not numeric, or when ``frame``
    already holds a column named like an output. Values outside the training range are
    recoded as the recoding extrapolates; see ``range_excess`` to report them.
    """
    import pandas as pd

    check_columns(log, frame, data_name)
    pieces = [recode(d, frame[d.column]) for d in log.decisions]
    return pd.concat([frame, *pieces], axis=1) if pieces else frame.copy()

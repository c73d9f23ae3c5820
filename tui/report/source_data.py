"""What a report reads differently when DATA is a source reduced in its engine: the
column's counts come from the engine, the data are named by their label and fingerprint."""

from __future__ import annotations

from dataclasses import dataclass

from tui.engine.counts import ReducedCounts, reduce_column
from tui.engine.reduced_data import ReducedData, SourceRecord
from tui.intake.dataset import ColumnarDataset, Dataset
from tui.problems import InputProblem
from tui.recodings.model import RecodingLog

Data = Dataset | ColumnarDataset | ReducedData


@dataclass(frozen=True)
class FetchedFrom:
    """Rows fetched from a source (for weights and covariates, under the row cap): the
    report names the source and its fingerprint, not a file."""

    label: str
    """The source's label (no secret in it)."""
    record: SourceRecord
    """What the log records of the source (its fingerprint among it)."""


def data_name(data: Data, origin: FetchedFrom | None = None) -> str:
    """The file's name, or the source's label (no secret in it)."""
    if origin is not None:
        return origin.label
    return data.label if isinstance(data, ReducedData) else data.path.name


def plain_counts(data: Data, column: str) -> ReducedCounts:
    """The column's counts, unweighted and unadjusted (finite values only)."""
    if isinstance(data, ReducedData):
        return data.counts(column)
    return reduce_column(data.values(column), data.outcome.y)


def refuse_rows(data: ReducedData, log: RecodingLog, weight: str | None) -> None:
    """Weights and covariates need rows, which the counts of a source do not hold."""
    if rows_needed(log, weight):
        adjusted = _adjusted_for(log)
        what = f"--weight {weight}" if weight else "decisions adjusted for " + ", ".join(adjusted)
        raise InputProblem(
            f"{what}: a report recomputes these from rows, which counts from "
            f"{data.label} do not hold; fetch the rows (under --row-cap) instead"
        )


def rows_needed(log: RecodingLog, weight: str | None) -> list[str]:
    """The covariates and weight a report recomputes from rows (empty: counts will do)."""
    return [*_adjusted_for(log), *([weight] if weight else [])]


def _adjusted_for(log: RecodingLog) -> list[str]:
    """Every covariate some decision was judged with, sorted."""
    return sorted({a for d in log.decisions for a in d.evidence.adjusted_for})


def source_lines(
    data: Data, log: RecodingLog, sha: str, origin: FetchedFrom | None = None
) -> tuple[dict, dict]:
    """The fingerprint's lines naming the data (before the row counts) and hashing them
    (after): a file by name and SHA-256 of its bytes, a source by label and fingerprint."""
    if not isinstance(data, ReducedData) and origin is None:
        same = "yes" if sha == log.source.sha256 else "no"
        return {"file": data.path.name}, {
            "sha256": sha,
            "same file as the log's training data": same,
        }
    trained = log.source.engine
    same = "yes" if trained is not None and trained.fingerprint == sha else "no"
    return {"source": data_name(data, origin)}, {
        "fingerprint": sha,
        "same data as the log's training data": same,
    }

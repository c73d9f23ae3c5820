"""A review of a source whose rows never leave its engine: the session holds the counts
the engine reduced (``ReducedData``) instead of a data file, and the log records where the
rows live (``source.engine``) with the engine's fingerprint instead of a file's hash."""

from __future__ import annotations

from pathlib import Path

from tui.app.session import ReviewSession, session_on_log
from tui.engine.reduced_data import ReducedData, SourceRecord
from tui.engine.scan import ScanSettings
from tui.intake.dataset import Dataset
from tui.intake.weights import FREQUENCY
from tui.problems import InputProblem
from tui.recodings.decisions import check_log_place, take_log
from tui.recodings.model import EngineInfo, SourceInfo


def open_source_session(
    data: ReducedData | Dataset,
    record: SourceRecord,
    log_path: str | Path | None = None,
    settings: ScanSettings | None = None,
    adjust: tuple[str, ...] | list[str] = (),
    weight: str | None = None,
    weight_kind: str = FREQUENCY,
    read_only: bool = False,
    take_over: bool = False,
    analyst: str | None = None,
    data_path: str | Path | None = None,
) -> ReviewSession:
    """Lock the log (default ``<table or query>.recodings.json`` here) and review the
    source's counts, or the rows fetched from it for covariates and weights (``adjust``,
    ``weight``). ``data_path`` is the file the source reads, if any: the log never goes
    over it. Raises InputProblem."""
    if not [c for c in data.columns if c != weight]:
        raise InputProblem(
            f"{record.name} has no numeric column to scan besides the outcome"
            + (" and the weight" if weight else "")
        )
    path = Path(log_path) if log_path is not None else Path(f"{record.name}.recodings.json")
    # a database URL or catalog table has no file: only the log's folder is checked
    check_log_place(
        path, Path(data_path if data_path is not None else record.name + ".no-data-file")
    )
    access = take_log(path, read_only, take_over, analyst)
    try:
        engine = EngineInfo(**record.where)  # type: ignore[arg-type]
        source = SourceInfo(record.name, record.rows, record.fingerprint, engine)
        return session_on_log(
            data, source, path, access, settings, adjust, weight, weight_kind, analyst
        )
    except BaseException:
        if access.lock is not None:
            access.lock.release()
        raise

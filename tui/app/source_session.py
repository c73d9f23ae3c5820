"""A review of a source whose rows never leave its engine: the session holds the counts
the engine reduced (``ReducedData``) instead of a data file, and the log records where the
rows live (``source.engine``) with the engine's fingerprint instead of a file's hash."""

from __future__ import annotations

from pathlib import Path

from tui.app.session import ReviewSession
from tui.engine.reduced_data import ReducedData
from tui.engine.scan import ScanSettings
from tui.problems import InputProblem
from tui.recodings.decisions import DecisionBook, check_log_place, open_log, take_log
from tui.recodings.model import EngineInfo, SourceInfo


def open_source_session(
    data: ReducedData,
    log_path: str | Path | None = None,
    settings: ScanSettings | None = None,
    read_only: bool = False,
    take_over: bool = False,
    analyst: str | None = None,
) -> ReviewSession:
    """Lock the log (default ``<table or query>.recodings.json`` here) and review the
    source's counts. Raises InputProblem."""
    if not [c for c in data.columns]:
        raise InputProblem(f"{data.label} has no numeric column to scan besides the outcome")
    path = Path(log_path) if log_path is not None else Path(f"{data.name}.recodings.json")
    check_log_place(path, Path(data.label))  # no data file: only the folder is checked
    access = take_log(path, read_only, take_over, analyst)
    try:
        name, rows, fingerprint, where = data.source_info()
        engine = EngineInfo(**{k: v for k, v in where.items() if v is not None})
        source = SourceInfo(name=name, rows=rows, sha256=fingerprint, engine=engine)
        log, warning = open_log(path, data.outcome.column, data.outcome.event, source)
        book = DecisionBook(log, path, read_only=access.read_only, lock=access.lock)
        if analyst:
            book.analyst = analyst
        return ReviewSession(
            data,
            book,
            settings or ScanSettings(),
            warning,
            data_sha256=fingerprint,
            access_notice=access.notice,
        )
    except BaseException:
        if access.lock is not None:
            access.lock.release()
        raise

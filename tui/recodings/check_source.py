"""``bendwise check LOG DATA`` where DATA is a source: the log's columns reduced and
tallied inside the engine (``check_counts``), with the file check's messages."""

from __future__ import annotations

from collections.abc import Mapping

from tui.engine.reduced_data import reduce_data
from tui.engine.scan import ScanSettings
from tui.intake.sources import Source
from tui.names import with_closest
from tui.problems import InputProblem
from tui.recodings.check import ColumnCheck
from tui.recodings.check_counts import check_log_counts
from tui.recodings.model import RecodingLog


def check_source(log: RecodingLog, source: Source, renames: Mapping[str, str]) -> list[ColumnCheck]:
    """Every decision of ``log`` checked on ``source`` (closed at the end). Raises
    InputProblem for a column the source lacks or does not hold as numbers."""
    try:
        names = [c.name for c in source.columns()]
        for old, new in renames.items():
            if new not in names:
                raise InputProblem(f"--rename {old}={new}: {source.label} has no column {new!r}")
        wanted = [renames.get(d.column, d.column) for d in log.decisions]
        lacking = [c for c in wanted if c not in names]
        if lacking:
            raise InputProblem(
                f"{source.label} lacks column(s) the log recodes: "
                f"{with_closest(lacking, names)}; a renamed column: --rename OLD=NEW"
            )
        asides = [renames.get(a.column, a.column) for a in log.set_aside]
        chosen = list(dict.fromkeys(wanted + [a for a in asides if a in names]))
        event = _event_option(log.event)
        data = reduce_data(source, log.outcome_column, event, (), ScanSettings(), chosen)
        not_numeric = [c for c in wanted if c not in data.reduced]
        if not_numeric:
            raise InputProblem(f"column(s) not numeric in {source.label}: {', '.join(not_numeric)}")
        return check_log_counts(
            log,
            lambda n: data.counts(n) if n in data.reduced else None,
            lambda n: data.missing_group(n) if n in data.reduced else None,
            source.tally,
            data.rows,
            data.outcome.events,
            renames,
        )
    finally:
        source.close()


def _event_option(event: object) -> str | None:
    """The log's event as the --event text that codes the outcome the same way."""
    if event is None or event is True or (isinstance(event, int | float) and event == 1):
        return None
    return str(event)

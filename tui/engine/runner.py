"""Scan many columns, yielding each result as it finishes."""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator

import numpy as np

from tui.engine.scan import ColumnScan, ScanSettings, scan_column

ValuesOf = Callable[[str], np.ndarray]
"""Returns a column's values (float, NaN for missing) aligned with the outcome."""


def scan_columns(
    columns: Iterable[str],
    values_of: ValuesOf,
    y: np.ndarray,
    settings: ScanSettings = ScanSettings(),
) -> Iterator[ColumnScan]:
    """Scan columns one at a time, in the order given; results are not yet ranked."""
    for name in columns:
        result, _table = scan_column(name, values_of(name), y, settings)
        yield result

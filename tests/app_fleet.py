"""Invented data for the review app's tests: late parcel deliveries of a van fleet.

Small (360 rows) so a scan takes a fraction of a second, with a shape of each kind the
screens must show: a U-shaped route length, a threshold in parcel weight, a curved van
age with some missing values, a linear count of stops, noise, a constant and a 0/1 column,
and one text column that is not scanned. A fixed seed makes every run identical.
"""

from __future__ import annotations

import hashlib
from pathlib import Path

import numpy as np
import pandas as pd

OUTCOME = "late_delivery"
NUMERIC = [
    "route_km",
    "stops",
    "parcel_kg",
    "van_age_years",
    "depot_temp_c",
    "depot_code",
    "night_shift",
]


def fleet_frame(rows: int = 360, seed: int = 4242) -> pd.DataFrame:
    """The invented fleet table."""
    rng = np.random.default_rng(seed)
    route_km = np.round(rng.uniform(5, 95, rows), 1)
    stops = rng.integers(4, 40, rows)
    parcel_kg = np.round(rng.gamma(4.0, 5.0, rows), 1)
    van_age = np.round(rng.uniform(0.2, 12, rows), 1)
    temp = np.round(rng.normal(14, 6, rows), 1)
    night = rng.integers(0, 2, rows)
    logit = (
        -1.2
        + 0.0012 * (route_km - 50) ** 2
        + 0.03 * (stops - 20)
        + 1.6 * (parcel_kg > 25)
        + 0.9 * np.log(van_age)
        + 0.3 * night
    )
    late = (rng.uniform(size=rows) < 1 / (1 + np.exp(-logit))).astype(int)
    van_age_shown = van_age.astype(float)
    van_age_shown[rng.uniform(size=rows) < 0.05] = np.nan
    return pd.DataFrame(
        {
            OUTCOME: late,
            "route_km": route_km,
            "stops": stops,
            "parcel_kg": parcel_kg,
            "van_age_years": van_age_shown,
            "depot_temp_c": temp,
            "depot_code": 7,
            "night_shift": night,
            "region": rng.choice(["north", "south", "coast"], rows),
        }
    )


def write_fleet(folder: Path, name: str = "fleet.csv") -> Path:
    """Write the fleet table as CSV in ``folder``; returns its path."""
    path = folder / name
    fleet_frame().to_csv(path, index=False)
    return path


WEIGHT = "copies"
"""Frequency weight of the weighted fleet table: how many identical deliveries a row is."""


def write_weighted_fleet(folder: Path, name: str = "fleet_w.csv") -> Path:
    """The fleet table with a frequency weight column (0 to 3; a zero leaves the row out)."""
    frame = fleet_frame()
    frame[WEIGHT] = np.random.default_rng(77).integers(0, 4, len(frame))
    path = folder / name
    frame.to_csv(path, index=False)
    return path


_SCANNED: dict[str, list] = {}


def quick_scanner(columns, values_of, y, settings, *, adjust=None):
    """The engine's scanner in this process (no worker processes to start), remembered
    across tests for identical data: many tests scan the same invented table."""
    from tui.engine.runner import scan_columns

    columns = list(columns)
    digest = hashlib.sha256(repr((columns, settings)).encode())
    for name in columns:
        digest.update(np.ascontiguousarray(values_of(name)).tobytes())
    digest.update(np.ascontiguousarray(y).tobytes())
    if adjust is not None:  # the covariates' values and the weights are part of the key
        design = adjust.covariates
        digest.update(repr((design.labels if design else None, adjust.weight_kind)).encode())
        for part in (design.matrix if design else None, adjust.weights):
            if part is not None:
                digest.update(np.ascontiguousarray(part).tobytes())
    key = digest.hexdigest()
    if key not in _SCANNED:
        scans = scan_columns(columns, values_of, y, settings, workers=1, adjust=adjust)
        _SCANNED[key] = list(scans)
    yield from _SCANNED[key]


async def settle(pilot) -> None:
    """Wait until every worker is done and every message is handled."""
    await pilot.app.workers.wait_for_complete()
    await pilot.pause()

"""Shared test helpers.

Golden files (``tests/golden``) are rewritten, after a deliberate change of output, by running
the tests that read them with ``BENDWISE_UPDATE_GOLDEN=1``; review the diff before committing.
"""

import os
import shutil
import sys
from pathlib import Path

import numpy as np
import pytest

REPO = Path(__file__).resolve().parent.parent
SAMPLE = REPO / "sample_data"
GOLDEN = REPO / "tests" / "golden"
UPDATE_GOLDEN = os.environ.get("BENDWISE_UPDATE_GOLDEN") == "1"
"""``BENDWISE_UPDATE_GOLDEN=1``: rewrite the golden files from this run (the one switch)."""

# Deterministic terminals for app tests.
os.environ.setdefault("TEXTUAL_ANIMATIONS", "none")


@pytest.fixture
def rng() -> np.random.Generator:
    return np.random.default_rng(20261201)


def run_cli(*args: str, cwd: Path | None = None):
    """Run ``python -m tui`` in a subprocess; returns the CompletedProcess."""
    import subprocess

    return subprocess.run(
        [sys.executable, "-m", "tui", *args],
        capture_output=True,
        text=True,
        cwd=cwd,
        timeout=600,
    )


def pytest_addoption(parser: pytest.Parser) -> None:
    default = float(os.environ.get("BENDWISE_SOAK_SECONDS", "5"))
    parser.addoption(
        "--soak-seconds",
        type=float,
        default=default,
        help="how long the crash-save soak test kills savers (default 5, BENDWISE_SOAK_SECONDS)",
    )


@pytest.fixture(scope="session")
def pg_server():
    """A throwaway PostgreSQL server on 127.0.0.1 for the whole session (see pg_server.py).

    Connect with ``pg_server.connect()`` or ``pg_server.url``; give a test its own database
    with ``pg_server.create_database(name)``. Skips where no server can be started here.
    """
    pytest.importorskip("psycopg", reason="the PostgreSQL client psycopg is not installed")
    from pg_server import ServerUnavailable, start_server

    try:
        server = start_server()
    except ServerUnavailable as reason:
        pytest.skip(str(reason))
    try:
        yield server
    finally:
        server.stop()


@pytest.fixture(scope="session")
def spark(tmp_path_factory):
    """One local Spark session (one core, loopback only, no UI) shared by the session's tests."""
    pyspark_sql = pytest.importorskip("pyspark.sql", reason="pyspark is not installed")
    if shutil.which("java") is None and not os.environ.get("JAVA_HOME"):
        pytest.skip("Spark needs a Java runtime and none was found (java on PATH or JAVA_HOME)")
    os.environ["SPARK_LOCAL_IP"] = "127.0.0.1"
    warehouse = tmp_path_factory.mktemp("spark-warehouse")
    session = (
        pyspark_sql.SparkSession.builder.master("local[1]")
        .appName("bendwise-tests")
        .config("spark.driver.host", "127.0.0.1")
        .config("spark.driver.bindAddress", "127.0.0.1")
        .config("spark.ui.enabled", "false")
        .config("spark.sql.shuffle.partitions", "1")
        .config("spark.sql.warehouse.dir", str(warehouse))
        .getOrCreate()
    )
    try:
        yield session
    finally:
        session.stop()

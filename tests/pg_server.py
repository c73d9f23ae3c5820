"""A throwaway PostgreSQL cluster for tests: temporary folder, free loopback port, trust auth.

``start_server()`` runs initdb and pg_ctl from the PostgreSQL server binaries (found through
BENDWISE_PG_BIN, then /usr/lib/postgresql/<newest>/bin, then PATH). initdb refuses to run as
root, so as root both run as the unprivileged ``postgres`` user through ``runuser`` (or ``su``),
in a folder that user owns. The server listens on 127.0.0.1 only, its unix socket lives in the
same folder, and ``stop()`` shuts it down and deletes the folder. The session fixture
``pg_server`` in conftest.py wraps this; tests skip only where no server or no way to drop root
exists (``ServerUnavailable`` says which).
"""

from __future__ import annotations

import os
import pwd
import shlex
import shutil
import socket
import subprocess
import tempfile
from dataclasses import dataclass, field
from pathlib import Path

SUPERUSER = "postgres"
SERVER_USER = "postgres"
"""The unprivileged account the cluster runs as when the tests run as root."""


class ServerUnavailable(RuntimeError):
    """No PostgreSQL server can be started here (the message says why)."""


def server_binaries() -> Path | None:
    """The folder holding initdb and pg_ctl, or None."""
    candidates = []
    if os.environ.get("BENDWISE_PG_BIN"):
        candidates.append(Path(os.environ["BENDWISE_PG_BIN"]))
    versions = sorted(
        Path("/usr/lib/postgresql").glob("*/bin"),
        key=lambda p: int(p.parent.name) if p.parent.name.isdigit() else 0,
        reverse=True,
    )
    candidates.extend(versions)
    on_path = shutil.which("initdb")
    if on_path:
        candidates.append(Path(on_path).parent)
    for folder in candidates:
        if (folder / "initdb").is_file() and (folder / "pg_ctl").is_file():
            return folder
    return None


def _as_server_user() -> list[str]:
    """Command prefix that runs a program as the unprivileged user ([] when not root)."""
    if os.geteuid() != 0:
        return []
    try:
        pwd.getpwnam(SERVER_USER)
    except KeyError:
        raise ServerUnavailable(
            f"running as root and there is no {SERVER_USER!r} user to run initdb as"
        ) from None
    if shutil.which("runuser"):
        return ["runuser", "-u", SERVER_USER, "--"]
    if shutil.which("su"):
        return ["su", SERVER_USER, "-s", "/bin/sh", "-c"]
    raise ServerUnavailable("running as root and neither runuser nor su is available")


def _run(prefix: list[str], argv: list[str], cwd: Path) -> None:
    command = [*prefix, shlex.join(argv)] if prefix[:1] == ["su"] else [*prefix, *argv]
    done = subprocess.run(command, cwd=cwd, capture_output=True, text=True, timeout=120)
    if done.returncode != 0:
        raise RuntimeError(f"{argv[0]} failed ({done.returncode}): {done.stderr or done.stdout}")


def _free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@dataclass
class PostgresServer:
    """A running throwaway cluster; connect as ``user`` (no password) to ``host:port``."""

    folder: Path
    bin: Path
    port: int
    host: str = "127.0.0.1"
    user: str = SUPERUSER
    dbname: str = "postgres"
    _prefix: list[str] = field(default_factory=list, repr=False)

    @property
    def url(self) -> str:
        """libpq URL of the default database."""
        return self.url_for(self.dbname)

    def url_for(self, dbname: str) -> str:
        """libpq URL of ``dbname`` on this server."""
        return f"postgresql://{self.user}@{self.host}:{self.port}/{dbname}"

    def connect(self, dbname: str | None = None, autocommit: bool = True):
        """A psycopg 3 connection (autocommit by default)."""
        import psycopg

        return psycopg.connect(self.url_for(dbname or self.dbname), autocommit=autocommit)

    def create_database(self, name: str) -> str:
        """Create an empty database (dropped first if it exists); returns its URL."""
        from psycopg import sql

        with self.connect() as con:
            con.execute(sql.SQL("DROP DATABASE IF EXISTS {}").format(sql.Identifier(name)))
            con.execute(sql.SQL("CREATE DATABASE {}").format(sql.Identifier(name)))
        return self.url_for(name)

    def stop(self) -> None:
        """Shut the server down at once and delete its folder."""
        data = self.folder / "data"
        try:
            if (data / "postmaster.pid").exists():
                _run(
                    self._prefix,
                    [str(self.bin / "pg_ctl"), "-D", str(data), "-m", "immediate", "-w", "stop"],
                    self.folder,
                )
        finally:
            shutil.rmtree(self.folder, ignore_errors=True)


def start_server(attempts: int = 3) -> PostgresServer:
    """initdb and start a cluster in a new temporary folder; the caller must ``stop()`` it."""
    binaries = server_binaries()
    if binaries is None:
        raise ServerUnavailable(
            "PostgreSQL server binaries (initdb, pg_ctl) not found; "
            "set BENDWISE_PG_BIN to their folder"
        )
    prefix = _as_server_user()
    folder = Path(tempfile.mkdtemp(prefix="bendwise-pg-"))
    try:
        if prefix:
            entry = pwd.getpwnam(SERVER_USER)
            os.chown(folder, entry.pw_uid, entry.pw_gid)
        data = folder / "data"
        _run(
            prefix,
            [
                str(binaries / "initdb"),
                "-D",
                str(data),
                "-U",
                SUPERUSER,
                "--auth=trust",
                "--encoding=UTF8",
                "--no-locale",
                "--no-sync",
            ],
            folder,
        )
    except BaseException:
        shutil.rmtree(folder, ignore_errors=True)
        raise
    last: Exception | None = None
    for _ in range(attempts):  # another process may take the port between probe and start
        server = PostgresServer(folder, binaries, _free_port(), _prefix=prefix)
        settings = {
            "listen_addresses": "'127.0.0.1'",
            "port": str(server.port),
            "unix_socket_directories": f"'{folder}'",
            # A throwaway cluster: durability costs time and buys nothing.
            "fsync": "off",
            "synchronous_commit": "off",
            "full_page_writes": "off",
        }
        (data / "postgresql.auto.conf").write_text(
            "".join(f"{k} = {v}\n" for k, v in settings.items()), encoding="utf-8"
        )
        try:
            _run(
                prefix,
                [
                    str(binaries / "pg_ctl"),
                    "-D",
                    str(data),
                    "-l",
                    str(folder / "server.log"),
                    "-w",
                    "-t",
                    "60",
                    "start",
                ],
                folder,
            )
            return server
        except RuntimeError as problem:
            last = problem
    log = folder / "server.log"
    detail = log.read_text(encoding="utf-8", errors="replace")[-2000:] if log.exists() else ""
    shutil.rmtree(folder, ignore_errors=True)
    raise RuntimeError(f"PostgreSQL did not start: {last}\n{detail}")


def load_frame(con, table: str, frame, schema: str | None = None) -> None:
    """Create ``[schema.]table`` from a pandas frame and copy its rows in (NaN becomes NULL).

    Integer columns become BIGINT, other numbers DOUBLE PRECISION, booleans BOOLEAN, the rest
    TEXT; an existing table of that name is replaced.
    """
    import pandas as pd
    from psycopg import sql

    def column_type(series) -> str:
        if pd.api.types.is_bool_dtype(series):
            return "BOOLEAN"
        if pd.api.types.is_integer_dtype(series):
            return "BIGINT"
        if pd.api.types.is_numeric_dtype(series):
            return "DOUBLE PRECISION"
        return "TEXT"

    name = sql.Identifier(schema, table) if schema else sql.Identifier(table)
    columns = sql.SQL(", ").join(
        sql.SQL("{} {}").format(sql.Identifier(str(c)), sql.SQL(column_type(frame[c])))
        for c in frame.columns
    )
    if schema:
        con.execute(sql.SQL("CREATE SCHEMA IF NOT EXISTS {}").format(sql.Identifier(schema)))
    con.execute(sql.SQL("DROP TABLE IF EXISTS {}").format(name))
    con.execute(sql.SQL("CREATE TABLE {} ({})").format(name, columns))
    rows = frame.astype(object).where(frame.notna(), None)
    with con.cursor() as cur, cur.copy(sql.SQL("COPY {} FROM STDIN").format(name)) as copy:
        for row in rows.itertuples(index=False, name=None):
            copy.write_row([v.item() if hasattr(v, "item") else v for v in row])

"""PostgreSQL connection URLs without secrets.

The password comes only from libpq's own places (PGPASSWORD, the password file, a service
file); a URL that carries one is refused, and only the redacted form (user, host, port,
database) is ever shown.
"""

from __future__ import annotations

import contextlib
import os
import re
from urllib.parse import parse_qsl, urlsplit

from tui.problems import InputProblem

SCHEMES = ("postgresql://", "postgres://")
SECRET_KEYS = frozenset({"password", "passfile", "sslpassword"})
WHERE_TO_PUT_IT = (
    "put the password in PGPASSWORD, in the password file (~/.pgpass or PGPASSFILE) "
    "or in a service file (PGSERVICE), not on the command line"
)


def is_postgres_url(text: str) -> bool:
    """The text is a libpq connection URL."""
    return text.lower().startswith(SCHEMES)


def checked_url(url: str) -> str:
    """The URL unchanged when it holds no secret; refuse it otherwise."""
    try:
        parts = urlsplit(url)
        password = parts.password
    except ValueError:
        raise InputProblem(
            "the PostgreSQL URL cannot be read (postgresql://USER@HOST:PORT/DBNAME)"
        ) from None
    if password is not None:
        raise InputProblem(f"the PostgreSQL URL holds a password; {WHERE_TO_PUT_IT}")
    keys = {k.lower() for k, _ in parse_qsl(parts.query, keep_blank_values=True)}
    if keys & SECRET_KEYS:
        raise InputProblem(f"the PostgreSQL URL holds a password setting; {WHERE_TO_PUT_IT}")
    return url


def redacted(url: str) -> str:
    """postgresql://USER@HOST:PORT/DBNAME, nothing else (no query settings, no secret)."""
    try:
        parts = urlsplit(url)
        user, host, port = parts.username, parts.hostname, parts.port
    except ValueError:
        return "postgresql://…"
    who = f"{user}@" if user else ""
    where = f"{host or ''}{':' + str(port) if port else ''}"
    return f"postgresql://{who}{where}{parts.path}"


def scrub(text: str, url: str) -> str:
    """A message from the driver with any secret it might carry blanked out."""
    secrets = [os.environ.get("PGPASSWORD", "")]
    with contextlib.suppress(ValueError):
        secrets.append(urlsplit(url).password or "")
    for secret in filter(None, secrets):
        text = text.replace(secret, "***")
    return re.sub(r"(?i)(password\s*=\s*)\S+", r"\1***", text)

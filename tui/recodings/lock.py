"""One writer per recoding log: a lock file beside the log while a review may write it.

The lock is ``<log>.lock``, created with ``O_CREAT | O_EXCL`` (so of two reviews starting at
once exactly one gets it) and holding who took it: host, process id, user, time and a random
token. It is removed when the review ends. A lock left by a review that was killed is
*stale*: when its host is this one and its process is gone, the next review reports it and
takes it over; a lock from another host cannot be checked from here, so taking it over needs
``--take-over``. Commands that only read a log (replay, sql, report, check, diff) never look
at the lock.
"""

from __future__ import annotations

import contextlib
import getpass
import json
import os
import secrets
import signal
import socket
import threading
from collections.abc import Callable
from dataclasses import asdict, dataclass
from pathlib import Path

from tui.problems import InputProblem
from tui.recodings.model import now_iso

LOCK_SUFFIX = ".lock"


def lock_path(log: str | os.PathLike[str]) -> Path:
    """``<log>.lock`` beside the log."""
    target = Path(log)
    return target.with_name(target.name + LOCK_SUFFIX)


def login_name() -> str:
    """The operating system's name for the person running bendwise ("unknown" if none)."""
    try:
        return getpass.getuser()
    except (KeyError, OSError, ImportError):  # no entry in the password database
        return "unknown"


@dataclass(frozen=True)
class Holder:
    """Who holds a lock, as its file says."""

    host: str
    """Host name of the holder's machine."""
    pid: int
    """Process id of the holding review on that host."""
    user: str
    """Login name of the person."""
    since: str
    """When the lock was taken (ISO 8601)."""
    token: str = ""
    """Random text telling two holders with the same process id apart."""

    def describe(self) -> str:
        """E.g. ``ana on ward-pc (process 4121, since 2026-03-02T09:15:00+00:00)``."""
        return f"{self.user} on {self.host} (process {self.pid}, since {self.since})"

    def on_this_host(self) -> bool:
        """Whether the holder's process ran on this machine."""
        return self.host == socket.gethostname()

    def gone(self) -> bool:
        """The holder ran on this host and its process has ended (never true for another
        host's holder, which cannot be checked from here)."""
        if not self.on_this_host() or os.name != "posix":
            return False
        if self.pid == os.getpid():
            return False
        try:
            os.kill(self.pid, 0)  # a harmless probe on POSIX
        except ProcessLookupError:
            return True
        except (PermissionError, OverflowError, OSError):
            return False  # alive, though another user's
        return False


_HELD: list[LogLock] = []
"""The locks this process holds now."""


class LogLocked(InputProblem):
    """Another review holds the log's lock."""

    def __init__(self, log: Path, holder: Holder | None, hint: str) -> None:
        self.holder = holder
        who = holder.describe() if holder else "an unreadable lock file"
        super().__init__(f"{log} is open for decisions by {who}; {hint}")


@dataclass
class LogLock:
    """A lock this process holds; ``release`` removes the file if it is still ours."""

    path: Path
    """The lock file."""
    holder: Holder
    """What this process wrote in it."""

    def __post_init__(self) -> None:
        _HELD.append(self)  # so a hang-up can drop it, even before the review has started

    def release(self) -> None:
        """Remove the lock file, unless another review has taken it over since."""
        if self in _HELD:
            _HELD.remove(self)
        if read_holder(self.path) == self.holder:
            with contextlib.suppress(OSError):  # already gone: nothing to release
                self.path.unlink()


def read_holder(path: Path) -> Holder | None:
    """The holder a lock file names; None when it is missing or unreadable."""
    try:
        document = json.loads(path.read_text(encoding="utf-8"))
        return Holder(
            host=str(document["host"]),
            pid=int(document["pid"]),
            user=str(document["user"]),
            since=str(document["since"]),
            token=str(document.get("token", "")),
        )
    except (OSError, ValueError, KeyError, TypeError):
        return None


def acquire(
    log: str | os.PathLike[str], take_over: bool = False, user: str | None = None
) -> tuple[LogLock, str | None]:
    """Take the lock of ``log``; returns it and a notice when an earlier holder's lock was
    taken over (None otherwise). Raises LogLocked when a review still holds it: a live
    process on this host always, another host's holder unless ``take_over``."""
    target = Path(log)
    path = lock_path(target)
    holder = Holder(
        host=socket.gethostname(),
        pid=os.getpid(),
        user=user or login_name(),
        since=now_iso(),
        token=secrets.token_hex(8),
    )
    notice = None
    for _attempt in range(3):  # a lock removed by its holder meanwhile: try again
        if _create(path, holder):
            return LogLock(path, holder), notice
        found = read_holder(path)
        if found is None:
            if not path.exists():
                continue
            if not take_over:
                raise LogLocked(target, None, f"remove {path} or add --take-over")
            notice = f"took over an unreadable lock file {path}"
        else:
            why = _why_free(target, found, take_over)
            # A session of this same process (tests, a script) is over: said without a word.
            taken = f"took over the lock of {found.describe()}: {why}"
            notice = None if why is _SAME_PROCESS else taken
        _remove_if_still(path, found)
    raise LogLocked(target, read_holder(path), "try again in a moment")


_SAME_PROCESS = "this process reopened the log"


def _why_free(log: Path, found: Holder, take_over: bool) -> str:
    """Why ``found``'s lock may be taken over; raises LogLocked when it may not."""
    if found.gone():
        return "its process is gone"
    if found.on_this_host() and found.pid == os.getpid():
        return _SAME_PROCESS  # its earlier session is over
    if found.on_this_host():
        raise LogLocked(log, found, "add --read-only to browse it without deciding")
    if take_over:
        return "--take-over"
    raise LogLocked(
        log,
        found,
        "add --read-only to browse it without deciding, or --take-over if that review has ended",
    )


def _create(path: Path, holder: Holder) -> bool:
    """Create the lock file holding ``holder``; False when it exists already."""
    try:
        fd = os.open(path, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o644)
    except FileExistsError:
        return False
    except OSError as error:
        raise InputProblem(f"cannot lock {path}: {error.strerror or error}") from None
    try:
        os.write(fd, (json.dumps(asdict(holder)) + "\n").encode("utf-8"))
        os.fsync(fd)
    except OSError as error:
        os.close(fd)
        path.unlink(missing_ok=True)
        raise InputProblem(f"cannot lock {path}: {error.strerror or error}") from None
    os.close(fd)
    return True


def _remove_if_still(path: Path, found: Holder | None) -> None:
    """Remove a lock being taken over, unless someone replaced it since it was read."""
    if read_holder(path) == found:
        try:
            path.unlink()
        except FileNotFoundError:
            pass
        except OSError as error:
            raise InputProblem(f"cannot take over {path}: {error.strerror or error}") from None


HANGUP_SIGNALS = ("SIGHUP", "SIGTERM")
"""A dropped SSH connection sends SIGHUP, a system shutdown or ``kill`` SIGTERM."""


def release_on_hangup() -> Callable[[], None]:
    """Release every lock this process holds and end the process when the terminal hangs
    up or the process is told to stop: their default action would end it at once and
    leave the lock behind. Every decision is saved before it counts, so nothing is lost;
    an interrupted save leaves the old log whole (atomic write). Set it before a lock is
    taken. Returns the call that puts the earlier handlers back; outside the main thread
    nothing is changed."""

    def ended(signum: int, _frame: object) -> None:
        for lock in list(_HELD):
            with contextlib.suppress(Exception):
                lock.release()
        os._exit(128 + signum)  # the terminal is gone: no screen to restore

    if threading.current_thread() is not threading.main_thread():
        return lambda: None
    signums = [getattr(signal, n) for n in HANGUP_SIGNALS if hasattr(signal, n)]
    before = {signum: signal.signal(signum, ended) for signum in signums}

    def restore() -> None:
        for signum, handler in before.items():
            signal.signal(signum, handler)

    return restore

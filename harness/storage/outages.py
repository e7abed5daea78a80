"""A database server that stops answering for a while (restarted, failed over, its network
down) is waited for, up to OUTAGE_SECONDS, and each store call is then tried again whole; past
that the command ends with one line and exit status 3 (`ServiceOutage`). Everything committed
before stays. A server that does not answer when a command starts is bad input instead
(`check_reachable`): its address is likely wrong.
"""

from __future__ import annotations

import functools
import socket
import time
from collections.abc import Callable
from typing import ParamSpec, TypeVar

import sqlalchemy
from sqlalchemy.engine import URL

from harness.errors import InputError, ServiceOutage
from harness.storage.urls import masked

OUTAGE_SECONDS = 60.0  # README, "Stores and servers": how long a command waits for a server
FIRST_PAUSE, LONGEST_PAUSE = 0.5, 4.0
DEFAULT_PORTS = {"postgresql": 5432, "mysql": 3306, "mariadb": 3306}
# what drivers say when the server went away, as opposed to refusing what was asked of it
GONE_WORDS = (
    "connection refused",
    "server closed the connection",
    "terminating connection",
    "the database system is shutting down",
    "the database system is starting up",
    "the database system is in recovery mode",
    "connection timeout expired",
    "timeout expired",
    "could not receive data",
    "could not send data",
    "consuming input failed",
    "connection is lost",
    "the connection is closed",
    "no route to host",
    "network is unreachable",
    "lost connection",
    "gone away",
)

Arguments = ParamSpec("Arguments")
Result = TypeVar("Result")


def unanswered(error: BaseException) -> bool:
    """Whether an error (or any error it was raised from) says the server went away."""
    seen: BaseException | None = error
    for _ in range(10):  # a chain of causes, never a cycle
        if seen is None or isinstance(seen, ServiceOutage):
            return False
        if isinstance(seen, sqlalchemy.exc.DBAPIError) and seen.connection_invalidated:
            return True
        if isinstance(seen, sqlalchemy.exc.OperationalError | sqlalchemy.exc.InterfaceError):
            text = str(seen.orig if seen.orig is not None else seen).lower()
            if any(words in text for words in GONE_WORDS):
                return True
        seen = seen.__cause__ or seen.__context__
    return False


def first_line(error: BaseException) -> str:
    seen: BaseException = error
    while isinstance(seen, sqlalchemy.exc.SQLAlchemyError) and seen.__cause__ is not None:
        seen = seen.__cause__  # Optuna wraps the driver's error in one of its own
    text = str(getattr(seen, "orig", None) or seen).strip()
    return text.splitlines()[0] if text else type(seen).__name__


def outage_line(shown: str, error: BaseException, hidden: list[str]) -> str:
    reason = first_line(error)
    for secret in hidden:
        reason = reason.replace(secret, "***")
    return (
        f"{shown}: the database server stopped answering and was still away after "
        f"{OUTAGE_SECONDS:g} s ({reason}); everything stored before is kept: run the same "
        "command again once the server is back"
    )


def outlasting(
    call: Callable[Arguments, Result], where: Callable[..., tuple[str, list[str]]]
) -> Callable[Arguments, Result]:
    """`call`, tried again whole while its server is away, for up to OUTAGE_SECONDS; then
    ServiceOutage. `where(*arguments)` gives the server as shown and its secrets (masked)."""

    @functools.wraps(call)
    def patient(*arguments: Arguments.args, **keywords: Arguments.kwargs) -> Result:
        deadline = time.monotonic() + OUTAGE_SECONDS
        pause = FIRST_PAUSE
        while True:
            try:
                return call(*arguments, **keywords)
            except Exception as error:
                if not unanswered(error):
                    raise
                if time.monotonic() + pause > deadline:
                    shown, hidden = where(*arguments)
                    raise ServiceOutage(outage_line(shown, error, hidden)) from None
            time.sleep(pause)
            pause = min(2 * pause, LONGEST_PAUSE)

    return patient


def check_reachable(url: URL, option: str, timeout: float = 5.0) -> None:
    """A server URL must answer on its host and port when the command starts."""
    if not url.host:
        return
    backend = url.get_backend_name()
    port = url.port or DEFAULT_PORTS.get(backend)
    shown = masked(url)
    if port is None:
        raise InputError(f"{option} {shown}: no port given and none known for {backend}")
    try:
        with socket.create_connection((url.host, port), timeout=timeout):
            pass
    except OSError as error:
        reason = error.strerror or error.__class__.__name__
        raise InputError(
            f"{option} {shown}: cannot reach {backend} server at {url.host}:{port} "
            f"({reason}); allowed: a URL whose server is running and reachable"
        ) from None

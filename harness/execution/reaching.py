"""Reaching a Dask scheduler, and losing it.

Whether a scheduler answers at an address is asked within one stated wait (CONNECT_SECONDS).

Dask's Client gives its `timeout` to each step of connecting in turn (the connection, its
handshake, the first request), and reads the handshake without a limit, so a port that
accepts and stays silent holds it forever; here the whole exchange has one deadline. Asked
before the command's heavy imports, so that the answer comes soon after the command starts.
"""

from __future__ import annotations

import asyncio
import logging
import socket
from collections.abc import Iterator
from contextlib import contextmanager
from typing import TYPE_CHECKING

from harness.errors import InputError, ServiceOutage

if TYPE_CHECKING:
    from distributed import Client

CONNECT_SECONDS = 5  # docs/clusters.md states it
# what a lost scheduler leaves behind, said in its line (scheduler_lost)
RUNS_KEPT = "stored runs are kept"
TRIALS_KEPT = "finished trials stay in the tuning database"
LAST_WORD_SECONDS = 0.5  # Dask's own deadline comes first, with its reason (refused, unknown host)


def deepest(error: BaseException) -> BaseException:
    """The first cause of an error (Dask wraps the socket's own error twice)."""
    for _ in range(10):  # a chain, never a cycle
        if (cause := error.__cause__ or error.__context__) is None:
            break
        error = cause
    return error


def socket_refusal(address: str) -> str | None:
    """Why a plain TCP connection to a tcp:// address fails right now (refused, unreachable),
    or None when one opens or the address is not TCP. Asked only after Dask gave up: its last
    attempt may have been cut short by the deadline, leaving a timeout where a refusal was."""
    from distributed.comm.addressing import parse_address, parse_host_port

    try:
        scheme, location = parse_address(address)
        if scheme != "tcp":
            return None
        with socket.create_connection(parse_host_port(location), timeout=LAST_WORD_SECONDS):
            return None
    except (OSError, ValueError) as error:
        return " ".join(str(error).split()) or None


def reach_scheduler(address: str) -> None:
    """Connect to the scheduler at `address` and shake hands, all within CONNECT_SECONDS; else
    one line naming the address and what happened (InputError: the address is likely wrong)."""
    from distributed.comm import connect

    seconds = CONNECT_SECONDS

    async def shake_hands() -> None:
        comm = await connect(address, timeout=seconds)  # Dask retries a refusal until then
        await comm.close()

    try:
        asyncio.run(asyncio.wait_for(shake_hands(), seconds + LAST_WORD_SECONDS))
        return
    except TimeoutError:  # nothing answered, or something accepted and then kept silent
        reason = "no answer, or a silent program that is not a Dask scheduler"
    except OSError as error:  # refused or unreachable until Dask's own deadline, no such host
        cause = deepest(error)
        if isinstance(cause, OSError) and cause.errno is not None:  # the socket's own words
            reason = " ".join(str(cause).split())
        else:  # the last attempt ran out of time (a busy machine): ask the socket once more
            reason = socket_refusal(address) or " ".join(str(error).split())
    except Exception:  # whatever answered spoke another protocol (its bytes read as garbage)
        reason = "something answered that is not a Dask scheduler"
    raise InputError(
        f"--cluster {address}: no Dask scheduler answered within {seconds:g} s ({reason}); "
        "allowed: the address of a running scheduler, such as tcp://10.0.0.5:8786, or local:N"
    )


@contextmanager
def quiet_dask_logs() -> Iterator[None]:
    """Dask's own log lines (reconnect attempts, tracebacks of the callbacks a lost connection
    cancels) stay off the terminal while connected: the command says what happened in one."""
    names = [n for n in logging.root.manager.loggerDict if n.split(".")[0] == "distributed"]
    loggers = [logging.getLogger(name) for name in ["distributed", *names]]
    levels = [logger.level for logger in loggers]
    for logger in loggers:
        logger.setLevel(logging.CRITICAL)
    try:
        yield
    finally:
        for logger, level in zip(loggers, levels, strict=True):
            logger.setLevel(level)


def scheduler_lost(address: str, kept: str) -> ServiceOutage:
    """The error that ends a command whose scheduler went away (killed, its machine gone):
    a failing run, not bad input; `kept` says what came back before and is stored."""
    return ServiceOutage(
        f"--cluster {address}: the scheduler stopped answering mid-run (connection lost); "
        f"{kept}: start the scheduler and its workers again and run the same command to do "
        "only the rest"
    )


@contextmanager
def holding_scheduler(client: Client, address: str, kept: str) -> Iterator[None]:
    """A block that uses the cluster: refused at once (scheduler_lost) when the client has
    lost its scheduler since it connected (Dask waits without end on its futures then), and so
    is a connection error met in the block once the client has lost it."""
    if client.status != "running":
        raise scheduler_lost(address, kept)
    try:
        yield
    except OSError:  # Dask's CommClosedError among them
        if client.status == "running":
            raise
        raise scheduler_lost(address, kept) from None

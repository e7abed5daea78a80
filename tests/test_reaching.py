"""An address where no Dask scheduler answers (harness/execution/reaching.py): one line naming
the address, exit status 2, nothing stored, after one stated wait for the whole exchange, even
where something accepts the connection and stays silent (Dask's Client alone waits forever for
its handshake there) or answers in another protocol."""

from __future__ import annotations

import socket
import threading
from collections.abc import Iterator

import pytest

from harness.cli import main
from harness.execution import reaching


@pytest.fixture
def listener() -> Iterator[tuple[str, list[bytes]]]:
    """A local TCP port that accepts connections; each is sent the bytes put in the list (none:
    it stays silent). Yields (its address, the list)."""
    server = socket.create_server(("127.0.0.1", 0))
    replies: list[bytes] = []
    held: list[socket.socket] = []

    def serve() -> None:
        while True:
            try:
                connection, _ = server.accept()
            except OSError:  # closed by the fixture
                return
            held.append(connection)  # kept open: a silent peer, not a refusing one
            for reply in replies:
                connection.sendall(reply)

    thread = threading.Thread(target=serve, daemon=True)
    thread.start()
    try:
        yield f"tcp://127.0.0.1:{server.getsockname()[1]}", replies
    finally:
        server.shutdown(socket.SHUT_RDWR)  # wakes the accept() waiting in the thread
        server.close()
        for connection in held:
            connection.close()
        thread.join(timeout=5)


def run_on(address: str, tiny_suite, store_path, capsys) -> str:
    arguments = ["run", str(tiny_suite), "--cluster", address, "--store", str(store_path)]
    assert main(arguments) == 2
    error = capsys.readouterr().err
    assert len(error.strip().splitlines()) == 1, error
    assert not store_path.exists()  # refused before anything is stored
    return error.strip()


def test_a_silent_listener_is_one_line_after_the_stated_wait(
    listener, tiny_suite, store_path, capsys, monkeypatch
):
    """The wait is the configured figure (lowered here so that the test is quick)."""
    monkeypatch.setattr(reaching, "CONNECT_SECONDS", 0.5)
    address, _ = listener
    assert run_on(address, tiny_suite, store_path, capsys) == (
        f"heedful: error: --cluster {address}: no Dask scheduler answered within 0.5 s (no "
        "answer, or a silent program that is not a Dask scheduler); allowed: the address of a "
        "running scheduler, such as tcp://10.0.0.5:8786, or local:N"
    )


def test_another_protocol_answering_is_one_line(
    listener, tiny_suite, store_path, capsys, monkeypatch
):
    monkeypatch.setattr(reaching, "CONNECT_SECONDS", 0.5)
    address, replies = listener
    replies.append(b"HTTP/1.1 400 Bad Request\r\nContent-Length: 0\r\n\r\n")  # a web server
    error = run_on(address, tiny_suite, store_path, capsys)
    assert "(something answered that is not a Dask scheduler)" in error


@pytest.mark.slow  # waits the documented 5 s
def test_a_closed_port_names_the_refusal_within_the_documented_wait(tiny_suite, store_path, capsys):
    """Dask retries a refused connection (a scheduler may be starting) until the wait ends;
    the figure is the one docs/clusters.md states."""
    assert reaching.CONNECT_SECONDS == 5
    error = run_on("tcp://127.0.0.1:1", tiny_suite, store_path, capsys)
    assert error.startswith(
        "heedful: error: --cluster tcp://127.0.0.1:1: no Dask scheduler answered within 5 s "
        "([Errno 111] Connection refused); allowed:"
    )


def test_a_refusal_is_named_when_the_last_attempt_ran_out_of_time(
    tiny_suite, store_path, capsys, monkeypatch
):
    """On a busy machine Dask's last retry can be cut short by its deadline, so its error
    chain ends in a timeout; the refusal is still what the user is told."""
    import distributed.comm

    async def out_of_time(address, timeout, **_):
        try:
            raise TimeoutError
        except TimeoutError as cut_short:
            raise OSError(f"Timed out trying to connect to {address} after {timeout} s") from (
                cut_short
            )

    monkeypatch.setattr(distributed.comm, "connect", out_of_time)
    error = run_on("tcp://127.0.0.1:1", tiny_suite, store_path, capsys)
    assert "within 5 s ([Errno 111] Connection refused); allowed:" in error

"""Stores that are not Heedful's, not whole, not files, or on a full disk: one line naming the
store, exit status 2, no traceback, and no change to a file that is not a Heedful store (not
even its journal mode). SQLite's own errors are real here: a file cut short, a page limit
(SQLite's `max_page_count`, which gives SQLITE_FULL as a full disk does) and a file-size limit
(RLIMIT_FSIZE, which gives SQLite's "disk I/O error").
"""

from __future__ import annotations

import hashlib
import os
import resource
import signal
import sqlite3
import subprocess
import sys
from pathlib import Path

import pytest

import harness.storage.database
from harness.cli import main

ROOT = Path(__file__).resolve().parents[1]


def digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def refused(arguments: list[str], capsys) -> str:
    """The command's one line, after checking its exit status 2 and that it is one line."""
    capsys.readouterr()
    try:
        status = main(arguments)
    except SystemExit as stop:  # argparse's own exit after its one line
        status = stop.code
    error = capsys.readouterr().err.strip()
    assert status == 2, error
    assert "Traceback" not in error and len(error.splitlines()) == 1, error
    return " ".join(error.split())


def other_program_file(path: Path, schema: str) -> Path:
    """An SQLite file written by another program, in its default (rollback) journal mode."""
    with sqlite3.connect(path) as connection:
        connection.executescript(schema)
    connection.close()
    return path


@pytest.mark.parametrize(
    "schema",
    [
        "CREATE TABLE runs (id INTEGER PRIMARY KEY, km REAL); INSERT INTO runs VALUES (1, 5);",
        "CREATE TABLE parcels (id INTEGER PRIMARY KEY, weight REAL);",
    ],
    ids=["its_own_runs_table", "other_tables_only"],
)
@pytest.mark.parametrize("command", ["run", "show", "report"])
def test_another_programs_sqlite_file_is_refused_and_left_as_it_was(
    schema, command, tiny_suite, tmp_path, capsys
):
    other = other_program_file(tmp_path / "logbook.db", schema)
    before = digest(other)
    arguments = {
        "run": ["run", str(tiny_suite), "--quiet"],
        "show": ["show"],
        "report": ["report", str(tiny_suite), "--out", str(tmp_path / "out")],
    }[command]
    line = refused([*arguments, "--store", str(other)], capsys)
    assert f"{other}: not a Heedful result store" in line
    assert digest(other) == before  # no table added, journal mode unchanged
    assert sorted(p.name for p in tmp_path.iterdir() if p.name.startswith("logbook")) == [
        "logbook.db"
    ]


@pytest.mark.parametrize("command", ["run", "show"])
def test_a_store_cut_short_is_named_as_damaged(command, finished_store, tmp_path, capsys):
    suite, complete = finished_store
    damaged = tmp_path / "cut.db"
    data = complete.read_bytes()
    damaged.write_bytes(data[: len(data) // 2])
    arguments = ["run", str(suite), "--quiet"] if command == "run" else ["show"]
    before = digest(damaged)
    line = refused([*arguments, "--store", str(damaged)], capsys)
    assert f"{damaged}: the result store is damaged" in line
    assert digest(damaged) == before


@pytest.mark.slow
def test_a_store_path_that_is_a_pipe_is_refused_at_once(tmp_path):
    """A FIFO would block in open() until a writer appears, deaf to Ctrl-C."""
    pipe = tmp_path / "runs.db"
    os.mkfifo(pipe)
    command = [sys.executable, "-m", "harness.cli", "show", "--store", str(pipe)]
    done = subprocess.run(command, cwd=ROOT, capture_output=True, text=True, timeout=60)
    assert done.returncode == 2, done.stderr
    assert done.stderr.strip() == (
        f"heedful: error: {pipe}: the result store is not a regular file (a pipe, device or "
        "socket); allowed: an SQLite file"
    )


def test_a_full_disk_while_the_store_is_written_is_one_line(
    tiny_suite, tmp_path, monkeypatch, capsys
):
    """The run command's first write (the data's profile, into a new store) meets a full
    disk; a disk that fills between runs is tests/test_no_space.py's."""
    store = tmp_path / "runs.db"
    real = harness.storage.database._sqlite_creator

    def limited(path: Path, write: bool):
        connect = real(path, write)

        def connect_then_limit() -> sqlite3.Connection:
            connection = connect()
            pages = connection.execute("PRAGMA page_count").fetchone()[0]
            connection.execute(f"PRAGMA max_page_count = {pages}")  # the disk is full now
            return connection

        return connect_then_limit

    monkeypatch.setattr(harness.storage.database, "_sqlite_creator", limited)
    harness.storage.database._engine.cache_clear()
    try:
        line = refused(["run", str(tiny_suite), "--store", str(store)], capsys)
    finally:
        harness.storage.database._engine.cache_clear()
    assert f"{store}: cannot write the result store: the disk is full" in line


@pytest.mark.slow
def test_a_store_that_cannot_grow_gives_one_line(tiny_suite, tmp_path):
    """RLIMIT_FSIZE stops the store file and its journal from growing (SQLite's I/O error)."""
    store = tmp_path / "runs.db"

    def small_files() -> None:
        signal.signal(signal.SIGXFSZ, signal.SIG_IGN)  # a write past the limit fails instead
        resource.setrlimit(resource.RLIMIT_FSIZE, (4096, 4096))

    command = [sys.executable, "-m", "harness.cli", "run", str(tiny_suite), "--quiet"]
    done = subprocess.run(
        [*command, "--store", str(store)],
        cwd=ROOT,
        capture_output=True,
        text=True,
        timeout=300,
        preexec_fn=small_files,
    )
    assert done.returncode == 2, done.stderr
    assert "Traceback" not in done.stderr and len(done.stderr.strip().splitlines()) == 1
    assert f"{store}: cannot write the result store" in done.stderr

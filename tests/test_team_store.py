"""A team result store on PostgreSQL, used from the command line: two submitters on one suite
store each run once; show, report, history and gate read it; reading commands change nothing,
on PostgreSQL and on an SQLite file alike."""

from __future__ import annotations

import hashlib
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
import sqlalchemy

from harness.cli import main
from harness.planning import expand, load_suite
from harness.storage import store
from harness.storage.database import locate

ROOT = Path(__file__).resolve().parents[1]


def table_rows(url: str) -> dict[str, int]:
    """Row count of every table the store's schema holds."""
    engine = sqlalchemy.create_engine(locate(url).url)
    try:
        with engine.connect() as connection:
            names = sqlalchemy.inspect(connection).get_table_names()
            return {
                name: connection.execute(sqlalchemy.text(f"SELECT count(*) FROM {name}")).scalar()
                for name in names
            }
    finally:
        engine.dispose()


def folder_digest(folder: Path) -> dict[str, str]:
    return {
        path.name: hashlib.sha256(path.read_bytes()).hexdigest()
        for path in sorted(folder.iterdir())
    }


@pytest.mark.slow  # two commands in processes of their own
def test_two_submitters_on_one_postgresql_store_then_every_command_reads_it(
    tiny_suite, postgres_store, tmp_path, capsys
):
    suite = tiny_suite.with_name("gated.toml")
    suite.write_text(tiny_suite.read_text() + "\n[gate]\ntolerance_points = 2.0\n")
    command = [sys.executable, "-m", "harness.cli", "run", str(suite), "--quiet"]
    command += ["--store", postgres_store]
    submitters = [
        subprocess.Popen(command, cwd=ROOT, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
        for _ in range(2)
    ]
    for submitter in submitters:
        _, error = submitter.communicate(timeout=300)
        assert submitter.returncode == 0, error.decode()
    specs = expand(load_suite(suite))
    runs = store.load_runs(postgres_store)
    assert sorted(runs["key"]) == sorted(s.key for s in specs)  # each run exactly once
    counts = table_rows(postgres_store)
    assert (counts["runs"], counts["profiles"]) == (len(specs), 1)

    baseline = tmp_path / "baseline.json"
    assert main(["baseline", str(suite), "--save", str(baseline), "--store", postgres_store]) == 0
    assert main(["gate", str(suite), "--baseline", str(baseline), "--store", postgres_store]) == 0
    written = table_rows(postgres_store)
    assert written["gate_history"] == 3  # one row per contender of the one gate run
    capsys.readouterr()

    assert main(["show", str(suite), "--format", "csv", "--store", postgres_store]) == 0
    assert capsys.readouterr().out.count("tiny_couriers") == len(specs)
    assert main(["history", str(suite), "--store", postgres_store]) == 0
    assert "1 gate run" in capsys.readouterr().out
    assert (
        main(["report", str(suite), "--out", str(tmp_path / "report"), "--store", postgres_store])
        == 0
    )
    assert (tmp_path / "report" / "report.md").is_file()
    assert table_rows(postgres_store) == written  # reading commands wrote nothing
    assert "heedful:heedful@" not in capsys.readouterr().out  # the password is never shown


def test_reading_commands_leave_a_sqlite_store_byte_identical(finished_store, tmp_path, capsys):
    suite, finished = finished_store
    folder = tmp_path / "store"
    folder.mkdir()
    copy = folder / "runs.db"
    shutil.copy(finished, copy)
    before = folder_digest(folder)
    assert main(["show", str(suite), "--store", str(copy)]) == 0
    assert (
        main(["report", str(suite), "--out", str(tmp_path / "report"), "--store", str(copy)]) == 0
    )
    assert main(["history", str(suite), "--store", str(copy)]) == 2  # no gate runs stored yet
    assert "no gate runs stored" in capsys.readouterr().err
    assert folder_digest(folder) == before  # same bytes, and no -wal or -shm files beside


def test_reading_commands_create_no_tables_on_postgresql(tiny_suite, postgres_store, capsys):
    assert main(["show", "--store", postgres_store]) == 2
    assert main(["history", str(tiny_suite), "--store", postgres_store]) == 2
    errors = capsys.readouterr().err.splitlines()
    assert len(errors) == 2 and all(
        line.startswith("heedful: error: postgresql") for line in errors
    )
    assert "heedful:***@" in errors[0] and table_rows(postgres_store) == {}


def test_a_writing_command_on_a_read_only_store_is_one_line(finished_store, tmp_path, capsys):
    suite, finished = finished_store
    copy = tmp_path / "runs.db"
    shutil.copy(finished, copy)
    copy.chmod(0o444)
    before = folder_digest(tmp_path)
    assert main(["run", str(suite), "--store", str(copy), "--quiet"]) == 2
    error = capsys.readouterr().err
    assert error.startswith(f"heedful: error: {copy}: result store is read-only; allowed:")
    assert len(error.strip().splitlines()) == 1 and folder_digest(tmp_path) == before

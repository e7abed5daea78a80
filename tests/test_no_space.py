"""A disk that fills mid-run stops the execution: the runs left are not started one by one only
to fail the same way; finished runs stay stored and the command exits 3 (issue 27, item 15)."""

from __future__ import annotations

import errno
import sqlite3

import pytest
import sqlalchemy.exc

import harness.execution.runs
from harness.cli import main
from harness.execution.runs import out_of_space
from harness.execution.sharing import Sharing
from harness.planning import expand, load_suite
from harness.storage import store


def full_disk() -> sqlalchemy.exc.OperationalError:
    """What SQLAlchemy raises when SQLite cannot grow its file (sqlite3's SQLITE_FULL text)."""
    return sqlalchemy.exc.OperationalError(
        "INSERT INTO runs ...", {}, sqlite3.OperationalError("database or disk is full")
    )


def test_the_runs_after_a_full_disk_are_not_started(tiny_suite, store_path, monkeypatch, capsys):
    save, saved = store.save_run, []
    trained = []
    perform = harness.execution.runs.perform

    def counted(spec, *args, **kwargs):
        trained.append(spec.key)
        return perform(spec, *args, **kwargs)

    def fills_after_two(path, record):
        if len(saved) == 2:
            raise full_disk()
        saved.append(record["key"])
        save(path, record)

    monkeypatch.setattr(harness.execution.runs, "perform", counted)
    monkeypatch.setattr(harness.execution.runs.store, "save_run", fills_after_two)
    status = main(["run", str(tiny_suite), "--store", str(store_path), "--quiet"])
    error = capsys.readouterr().err
    assert status == 3
    assert len(trained) == 3  # two stored, the third failed to store, three never started
    lines = error.strip().splitlines()
    assert len(lines) == 2 and "database or disk is full" in lines[0], error
    assert "stopped: the disk is full, so 3 runs were not started" in lines[1]
    assert sorted(store.load_runs(store_path)["key"]) == sorted(saved)  # nothing stored is lost


def test_a_full_disk_reported_by_a_worker_halts_the_shared_queue(tiny_suite, tmp_path):
    """A worker sends its error back pickled, without its cause: the text still tells."""
    specs = expand(load_suite(tiny_suite))
    sharing = Sharing(specs[1:], tmp_path / "runs.db", workers=None, on_finished=None)
    returned = OSError(errno.ENOSPC, "No space left on device")
    sharing.raised_in(specs[0], returned)
    assert sharing.take(for_worker=True) is None and sharing.take(for_worker=False) is None
    assert sharing.raised[-1].startswith("stopped: the disk is full, so 5 runs were not started")


def test_only_running_out_of_space_stops_every_run():
    assert out_of_space(OSError(errno.EDQUOT, "Disk quota exceeded"))
    assert out_of_space(RuntimeError(str(full_disk())))  # as text, the way a worker returns it
    assert not out_of_space(OSError(errno.EACCES, "Permission denied"))
    assert not out_of_space(ValueError("loss is NaN"))


@pytest.mark.slow  # starts a cluster
def test_a_full_disk_on_the_submitter_of_a_cluster_stops_the_suite(
    tiny_suite, store_path, monkeypatch, capsys
):
    """On a cluster the submitting process stores every result: once its disk is full, the
    runs still out are cancelled rather than trained only to fail to be stored."""
    import harness.execution.cluster

    save, saved = store.save_run, []

    def fills_after_two(path, record):
        if len(saved) == 2:
            raise full_disk()
        saved.append(record["key"])
        save(path, record)

    monkeypatch.setattr(harness.execution.cluster.store, "save_run", fills_after_two)
    arguments = ["run", str(tiny_suite), "--cluster", "local:2", "--quiet", "--store"]
    assert main([*arguments, str(store_path)]) == 3
    lines = capsys.readouterr().err.strip().splitlines()
    assert len(lines) == 2 and "database or disk is full" in lines[0]
    assert lines[1].startswith("heedful: error: stopped: the disk is full, so ")
    assert sorted(store.load_runs(store_path)["key"]) == sorted(saved)

"""Report and gate outputs never follow symbolic links, and a file that cannot be written is
one line and exit 2 before the gate history is appended (issue 27, item 10)."""

from __future__ import annotations

import errno
import shutil
from pathlib import Path

import pytest

import harness.output_files
from harness.cli import main
from harness.output_files import output_folder, write_output
from harness.storage.gate_history import load_history


@pytest.fixture
def finished(finished_store, tmp_path) -> tuple[Path, Path, Path]:
    """(suite, a copy of its finished store, its saved baseline)."""
    suite, store = finished_store
    copied = tmp_path / "runs.db"
    shutil.copy(store, copied)
    baseline = tmp_path / "baseline.json"
    assert main(["baseline", str(suite), "--save", str(baseline), "--store", str(copied)]) == 0
    return suite, copied, baseline


def test_a_planted_link_is_replaced_not_written_through(tmp_path):
    victim = tmp_path / "victim.txt"
    victim.write_text("keep me")
    link = tmp_path / "out.md"
    link.symlink_to(victim)
    write_output(link, "report")
    assert victim.read_text() == "keep me"
    assert not link.is_symlink() and link.read_text() == "report"
    assert [p.name for p in tmp_path.iterdir() if "partial" in p.name] == []


def test_a_linked_sub_folder_is_replaced_by_a_real_one(tmp_path):
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    (tmp_path / "out").mkdir()
    (tmp_path / "out" / "csv").symlink_to(elsewhere)
    folder = output_folder(tmp_path / "out" / "csv")
    assert folder.is_dir() and not folder.is_symlink() and list(elsewhere.iterdir()) == []


def test_report_writes_no_file_outside_its_folder(finished, tmp_path, capsys):
    suite, store, _ = finished
    out, elsewhere, victim = tmp_path / "report", tmp_path / "elsewhere", tmp_path / "victim.md"
    out.mkdir()
    elsewhere.mkdir()
    victim.write_text("outside")
    (out / "report.md").symlink_to(victim)
    (out / "csv").symlink_to(elsewhere)
    assert main(["report", str(suite), "--out", str(out), "--store", str(store)]) == 0
    capsys.readouterr()
    assert victim.read_text() == "outside" and list(elsewhere.iterdir()) == []
    assert (
        not (out / "report.md").is_symlink()
        and "# Heedful report:" in (out / "report.md").read_text()
    )
    assert not (out / "csv").is_symlink() and any((out / "csv").glob("*.csv"))


def test_gate_outputs_replace_links(finished, tmp_path, capsys):
    suite, store, baseline = finished
    victim = tmp_path / "victim.xml"
    victim.write_text("outside")
    (tmp_path / "gate.xml").symlink_to(victim)
    (tmp_path / "gate.md").symlink_to(victim)
    arguments = ["gate", str(suite), "--baseline", str(baseline), "--store", str(store)]
    junit, markdown = (
        ["--junit", str(tmp_path / "gate.xml")],
        ["--markdown", str(tmp_path / "gate.md")],
    )
    assert main(arguments + junit + markdown) == 0
    capsys.readouterr()
    assert victim.read_text() == "outside"
    assert (tmp_path / "gate.xml").read_text().startswith("<?xml")


def test_a_junit_path_inside_a_file_is_one_line_and_exit_2(finished, tmp_path, capsys):
    suite, store, baseline = finished
    arguments = ["gate", str(suite), "--baseline", str(baseline), "--store", str(store)]
    with pytest.raises(SystemExit) as stopped:
        main(arguments + ["--junit", str(suite / "gate.xml")])
    error = capsys.readouterr().err.strip()
    assert stopped.value.code == 2 and len(error.splitlines()) == 1
    assert f"cannot write: {suite} is a file, not a folder" in error
    assert load_history(store, "tiny_couriers").empty


def test_a_full_disk_is_exit_2_before_the_history_is_appended(
    finished, tmp_path, capsys, monkeypatch
):
    suite, store, baseline = finished

    def no_space(*_):
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(harness.output_files.os, "replace", no_space)
    arguments = ["gate", str(suite), "--baseline", str(baseline), "--store", str(store)]
    status = main(arguments + ["--junit", str(tmp_path / "gate.xml")])
    error = capsys.readouterr().err.strip()
    assert status == 2 and len(error.splitlines()) == 1 and "Traceback" not in error
    assert error.endswith(
        "gate.xml: cannot write (No space left on device); allowed: a writable path with free space"
    )
    assert load_history(store, "tiny_couriers").empty  # the gate did not count
    assert not (tmp_path / "gate.xml").exists()
    assert [p.name for p in tmp_path.iterdir() if "partial" in p.name] == []

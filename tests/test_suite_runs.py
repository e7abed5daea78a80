"""A suite is resolved once, where the user names it: the command line's argument types and the
notebook API read a suite file into one value (harness.storage.suite_runs) and every command and
analysis takes that value; nothing else parses a suite file or asks the file system whether a
suite argument is a file."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

import harness
import harness.storage.suite_runs
from harness import api
from harness.cli import main
from harness.errors import InputError
from harness.schema.analysis import DEFAULT_ANALYSIS
from harness.storage.database import locate
from harness.storage.suite_runs import SuiteFile, SuiteRuns, read_suite, suite_runs

PACKAGE = Path(harness.__file__).parent
RESOLVER = PACKAGE / "storage" / "suite_runs.py"


def test_a_suite_file_and_a_stored_name_resolve_to_one_value(tiny_suite, store_path):
    by_file = suite_runs(store_path, tiny_suite)
    assert isinstance(by_file.file, SuiteFile)
    assert (by_file.name, by_file.given, by_file.names) == (
        "tiny_couriers",
        str(tiny_suite),
        ["tiny_couriers"],
    )
    assert by_file.store == locate(store_path)
    assert by_file.settings == by_file.suite.analysis

    by_name = suite_runs(store_path, "tiny_couriers")
    assert (by_name.name, by_name.file, by_name.given) == ("tiny_couriers", None, "tiny_couriers")
    assert by_name.settings == DEFAULT_ANALYSIS
    with pytest.raises(InputError, match="tiny_couriers: suite file not found"):
        by_name.suite  # noqa: B018 - the property is what raises

    every = suite_runs(store_path)
    assert (every.name, every.names, every.file) == (None, None, None)


def test_a_command_reads_its_suite_file_once(finished_store, monkeypatch, tmp_path, capsys):
    suite, store = finished_store
    reads = []
    real = harness.storage.suite_runs.load_suite
    monkeypatch.setattr(
        harness.storage.suite_runs, "load_suite", lambda path: reads.append(path) or real(path)
    )
    assert main(["show", str(suite), "--store", str(store)]) == 0
    assert main(["report", str(suite), "--store", str(store), "--out", str(tmp_path)]) == 0
    assert reads == [str(suite), str(suite)]  # one read per command
    capsys.readouterr()


def test_the_api_resolves_like_the_command_line(finished_store):
    suite, store = finished_store
    chosen = SuiteRuns.of(store, read_suite(suite))
    assert chosen == suite_runs(store, suite)
    assert len(api.runs(store, suite)) == len(api.runs(store, "tiny_couriers")) == 6
    assert api.settings_of(suite) == read_suite(suite).suite.analysis
    assert api.settings_of("tiny_couriers") == DEFAULT_ANALYSIS


def calls_to(name: str, path: Path) -> list[int]:
    """Lines of a module that call `name` (as a bare name or an attribute)."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    return [
        node.lineno
        for node in ast.walk(tree)
        if isinstance(node, ast.Call)
        and (getattr(node.func, "id", None) == name or getattr(node.func, "attr", None) == name)
    ]


def test_only_the_resolver_reads_a_suite_file_or_tells_a_file_from_a_name():
    """load_suite is called in harness.storage.suite_runs alone (and defined in planning); a
    suite argument's `is_file` test lives there too, never in commands or analyses."""
    readers = {
        str(path.relative_to(PACKAGE)): lines
        for path in sorted(PACKAGE.rglob("*.py"))
        if path != RESOLVER and (lines := calls_to("load_suite", path))
    }
    assert readers == {}
    staged = ("commands", "analysis", "api.py", "cli.py", "arguments.py", "report", "gate")
    sniffing = {
        str(path.relative_to(PACKAGE)): lines
        for path in sorted(PACKAGE.rglob("*.py"))
        if str(path.relative_to(PACKAGE)).startswith(staged)
        and (lines := calls_to("is_file", path))
    }
    assert sniffing == {}

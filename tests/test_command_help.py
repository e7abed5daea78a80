"""What the command line says about itself: --version, help for every argument with its
default, help that matches behaviour, and the tuning database's renamed option."""

from __future__ import annotations

import argparse
from types import SimpleNamespace

import pytest

import harness
from harness.cli import main, parser
from harness.commands.inspect import check
from harness.planning import load_suite, map_run_count, map_specs
from harness.storage.suite_runs import read_suite
from tests.conftest import TINY_SUITE


def subcommands() -> dict[str, argparse.ArgumentParser]:
    top = parser()
    action = next(a for a in top._actions if isinstance(a, argparse._SubParsersAction))
    return dict(action.choices)


def documented_arguments() -> list[tuple[str, argparse.Action]]:
    """(command, argument) for every argument a user can give, help included."""
    found = [("heedful", action) for action in parser()._actions]
    for name, sub in subcommands().items():
        found += [(name, action) for action in sub._actions]
    return [(name, action) for name, action in found if action.help != argparse.SUPPRESS]


def test_version_prints_the_package_version(capsys):
    with pytest.raises(SystemExit) as stopped:
        main(["--version"])
    assert stopped.value.code == 0
    assert capsys.readouterr().out.strip() == f"heedful {harness.__version__}"


def argument_id(value: object) -> str:
    """A stable test id: an action's repr holds addresses that differ between processes."""
    if isinstance(value, argparse.Action):
        return "/".join(value.option_strings) or value.dest
    return str(value)


@pytest.mark.parametrize("command, action", documented_arguments(), ids=argument_id)
def test_every_argument_has_help_and_says_its_default(command: str, action: argparse.Action):
    assert action.help and action.help.strip(), (command, action.dest)
    quiet_default = action.default in (None, False, argparse.SUPPRESS) or action.required
    if not quiet_default and action.dest not in ("help", "version"):
        assert "default" in action.help, (command, action.dest)


def test_memory_limit_help_mentions_jobs_only_where_there_are_jobs():
    commands = subcommands()

    def memory_help(name: str) -> str:
        return next(a.help for a in commands[name]._actions if a.dest == "memory_limit")

    assert "--jobs" not in memory_help("check")
    assert not any(a.dest == "jobs" for a in commands["check"]._actions)
    assert "--jobs" in memory_help("run")


def test_show_help_names_what_each_format_prints(capsys):
    with pytest.raises(SystemExit):
        main(["show", "--help"])
    text = " ".join(capsys.readouterr().out.split())
    assert "summaries" in text and "verdicts" in text and "one record per stored run" in text


def test_tuning_commands_take_the_store_and_the_tuning_database():
    commands = subcommands()
    for name in ("run", "tuning"):
        options = {o for a in commands[name]._actions for o in a.option_strings}
        assert {"--store", "--tuning-database"} <= options


def test_old_storage_option_still_works_with_a_one_line_note(tiny_suite, capsys):
    suite = str(tiny_suite)  # read while the arguments are parsed
    args = parser().parse_args(["run", suite, "--storage", "sqlite:///tuning.db"])
    assert args.tuning_database == "sqlite:///tuning.db"
    note = capsys.readouterr().err
    assert note.count("\n") == 1 and "--tuning-database" in note
    new = parser().parse_args(["tuning", suite, "--tuning-database", "sqlite:///t.db"])
    assert new.tuning_database == "sqlite:///t.db"
    assert capsys.readouterr().err == ""


MAPPED = (
    TINY_SUITE.replace("seeds = 2", "seeds = 3").replace(
        '[contenders.features_only]\nmodel = "mlp"\nhidden = 8\n', ""
    )
    + "\n[homophily_map]\nlevels = [0.2, 0.8]\nseeds = 1\n"
)


def test_check_counts_the_homophily_map_runs(write_suite, capsys):
    path = write_suite(MAPPED)
    suite = load_suite(path)
    assert list(suite.contenders) == ["attention", "convolution"]
    # the count check prints is what run trains: map_specs for a profile of the same graph
    profile = SimpleNamespace(
        nodes=120,
        class_counts=[40, 40, 40],
        degrees=SimpleNamespace(mean=6.0),
        features=SimpleNamespace(dimension=8),
    )
    assert map_run_count(suite) == len(map_specs(suite, profile)) == 4
    outcome = check(read_suite(path))
    assert (outcome.total, outcome.map_runs) == (6, 4)
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "10 runs in total (6 of the suite, 4 of the homophily map)" in out


def test_check_without_a_map_counts_only_the_suite(tiny_suite):
    assert check(read_suite(tiny_suite)).map_runs == 0

"""Command-line argument types: each turns one option's text into a checked value, or says in
one line what was given and what is allowed (argparse prints it and exits with status 2)."""

from __future__ import annotations

import argparse
from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING, TypeVar

from harness.errors import InputError
from harness.output_files import check_parent

if TYPE_CHECKING:
    from harness.storage.database import Location
    from harness.storage.suite_runs import SuiteFile


class OneLineParser(argparse.ArgumentParser):
    """Command-line mistakes are bad input too: one line, exit status 2 (subcommands inherit)."""

    def error(self, message: str) -> None:
        self.exit(2, f"heedful: error: {self.prog}: {' '.join(message.split())}\n")


Number = TypeVar("Number", int, float)


def _number(
    text: str, kind: Callable[[str], Number], allowed: str, fits: Callable[[Number], bool]
) -> Number:
    try:
        value = kind(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"given {text!r}; allowed: {allowed}") from None
    if not fits(value):
        raise argparse.ArgumentTypeError(f"given {text}; allowed: {allowed}")
    return value


def positive_int(text: str) -> int:
    return _number(text, int, "a whole number >= 1", lambda value: value >= 1)


def positive_float(text: str) -> float:
    return _number(text, float, "a number > 0", lambda value: 0 < value < float("inf"))


def cluster_address(text: str) -> str:
    """local:N with N >= 1, or a scheduler address such as tcp://10.0.0.5:8786."""
    kind, _, rest = text.partition(":")
    if kind == "local":
        if rest.isdigit() and int(rest) >= 1:
            return text
        raise argparse.ArgumentTypeError(f"given {text!r}; allowed: local:N with N >= 1")
    if not rest or any(character.isspace() for character in text):
        raise argparse.ArgumentTypeError(
            f"given {text!r}; allowed: a scheduler address such as tcp://10.0.0.5:8786, or local:N"
        )
    return text


def output_file(text: str) -> Path:
    """A file the command will write: not an existing folder, nor in a folder that is a file
    (checked before any run, as well as when written)."""
    if Path(text).is_dir():
        raise argparse.ArgumentTypeError(f"given {text!r}, a folder; allowed: a file path")
    try:
        check_parent(Path(text))
    except InputError as error:
        raise argparse.ArgumentTypeError(f"given {text!r}; {error}") from None
    return Path(text)


def store_location(text: str) -> Location:
    from harness.storage.database import locate
    from harness.storage.outages import check_reachable

    try:
        location = locate(text)
        if location.path is None:  # a server that is away now: its address is likely wrong
            check_reachable(location.url, "--store")
        return location
    except InputError as error:
        raise argparse.ArgumentTypeError(str(error)) from None


# A suite is resolved here, once: the commands take the parsed file (or the stored name) and
# never look at the file system again. Errors in the file raise InputError, which passes through
# argparse untouched and is printed as every other bad input is.
def suite_file(text: str) -> SuiteFile:
    """A suite file (TOML), read and validated."""
    from harness.storage.suite_runs import read_suite

    return read_suite(text)


def suite_file_or_name(text: str) -> SuiteFile | str:
    """A suite file, read and validated, or else the name of a suite in the store."""
    from harness.storage.suite_runs import named_suite

    return named_suite(text)

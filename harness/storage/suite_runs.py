"""A suite as the user named it, resolved once where it is named (the command line's argument
types, the notebook API): by its file, parsed here and nowhere else, or by the name its runs
are stored under; and the store holding its runs. Inner code takes these values and never
looks at the file system to tell a file from a name."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from harness.errors import InputError
from harness.planning import load_suite
from harness.schema.analysis import DEFAULT_ANALYSIS, Analysis
from harness.schema.suite import Suite
from harness.storage.database import Location, locate


@dataclass(frozen=True)
class SuiteFile:
    """A suite file as given (its path text, which messages repeat) and the suite validated
    from it."""

    path: str
    suite: Suite


def read_suite(path: str | Path) -> SuiteFile:
    """A suite file, read and validated; errors name the file."""
    return SuiteFile(str(path), load_suite(path))


def named_suite(given: str | Path) -> SuiteFile | str:
    """What a suite argument names: the suite file at that path, read, when there is one, else
    the name of a suite in the store."""
    return read_suite(given) if Path(given).is_file() else str(given)


@dataclass(frozen=True)
class SuiteRuns:
    """A suite and the store of its runs: the one value the commands and analyses take.

    `file` is the suite file when the suite was named by one (its stored runs are then the
    runs the file still expands to); `name` is None for every suite in the store.
    """

    store: Location
    name: str | None = None
    file: SuiteFile | None = None

    @classmethod
    def of(cls, store: str | Path | Location, named: SuiteFile | str | None) -> SuiteRuns:
        if isinstance(named, SuiteFile):
            return cls(locate(store), named.suite.name, named)
        return cls(locate(store), named)

    @property
    def given(self) -> str:
        """The suite as the user wrote it, for messages: the file's path, or the name."""
        return self.file.path if self.file is not None else str(self.name)

    @property
    def names(self) -> list[str] | None:
        """The stored suite names to load: this suite's, or None for every suite."""
        return None if self.name is None else [self.name]

    @property
    def suite(self) -> Suite:
        """The suite parsed from its file; a suite named by its stored name has none."""
        if self.file is None:
            raise InputError(f"{self.given}: suite file not found; given a stored suite name")
        return self.file.suite

    @property
    def settings(self) -> Analysis:
        return analysis_settings(self.file)


def analysis_settings(named: SuiteFile | str | None) -> Analysis:
    """The `[analysis]` table of a suite file; the defaults for a stored name (or none)."""
    return named.suite.analysis if isinstance(named, SuiteFile) else DEFAULT_ANALYSIS


def suite_runs(store: str | Path | Location, suite: str | Path | None = None) -> SuiteRuns:
    """The suite a path or stored name gives (None: every suite), with the store of its runs."""
    return SuiteRuns.of(store, None if suite is None else named_suite(suite))

"""A report table as rows of plain text, and the helpers every table module shares.
Formatting only: every figure comes from a SuiteReport (harness.analysis.suite_report)."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import pandas as pd

from harness.analysis.suite_report import SuiteReport
from harness.formatting import metric_label, percent


@dataclass(frozen=True)
class TextTable:
    """A titled table of plain (unescaped) text cells; `right` marks numeric columns."""

    name: str
    title: str
    header: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    right: tuple[bool, ...]
    note: str = ""


def points(value: float) -> str:
    return f"{value:g} point" + ("" if value == 1 else "s")


def facts(report: SuiteReport) -> str:
    """One paragraph: what was measured and with which settings."""
    settings = report.settings
    return (
        f"Metric: test {report_metric(report)}; {seed_count(report)}; minimum "
        f"gain that matters: {points(settings.minimum_gain)}; confidence "
        f"{percent(settings.confidence)}; {settings.bootstrap_resamples} bootstrap resamples. "
        "Figures are estimates on this data under these splits and seeds, not guarantees "
        "about other data."
    )


def report_metric(report: SuiteReport) -> str:
    return metric_label(report.metric)


def seed_count(report: SuiteReport) -> str:
    """Seeds per contender, as the tables count them: `6 seeds`, or `3 to 6 seeds per
    contender` while a suite is partly run (the headline counts the seeds a pair shares)."""
    counts = report.contenders["seeds"]
    low, high = int(counts.min()), int(counts.max())
    return f"{high} seeds" if low == high else f"{low} to {high} seeds per contender"


# a column of a table: its header and how a row (a named tuple of a DataFrame) is written in it
Column = tuple[str, Callable[[Any], str]]


def as_text(header: str, field: str | None = None) -> Column:
    """A column showing a row's field (named as the header unless given) as it is."""
    return header, lambda row: str(getattr(row, field or header))


def column_table(
    name: str, title: str, frame: pd.DataFrame, columns: list[Column], note: str = ""
) -> TextTable:
    """One row per row of `frame`, each cell written as its column says."""
    header = [heading for heading, _ in columns]
    rows = [[cell(row) for _, cell in columns] for row in frame.itertuples()]
    return _table(name, title, header, rows, note)


def _table(name: str, title: str, header: list[str], rows: list[list[str]], note: str = ""):
    right = tuple(
        all(_numeric(row[i]) for row in rows) if rows else False for i in range(len(header))
    )
    return TextTable(name, title, tuple(header), tuple(tuple(r) for r in rows), right, note)


def _numeric(text: str) -> bool:
    stripped = text.replace(",", "").replace("±", " ").replace(" to ", " ").lstrip("<").split()
    try:
        return bool(stripped) and all(s == "-" or float(s) is not None for s in stripped)
    except ValueError:
        return False

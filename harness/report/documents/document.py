"""The report document every format renders: tables with their captions and legends, sentences,
lists and plots, plus the DataFrames machine formats write at full precision.

Formatting only: every figure comes computed from harness.analysis (or the gate, tuning and
profile stages); a document holds plain (unescaped) text, each format escapes it its own way.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any

import pandas as pd

from harness.report.documents.glossary import legend_for


@dataclass(frozen=True)
class Table:
    """A titled table of plain text cells; `right` marks numeric columns, `optional` the columns
    a narrow screen drops first, `whole` the columns (names, verdicts) never cut; `marks` holds
    each row's verdict or status (styles it on screen); `brief_rows` is how many rows a screen
    shows (all when None; the files hold every row)."""

    name: str
    title: str
    header: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    right: tuple[bool, ...]
    note: str = ""
    legend: str = ""
    optional: tuple[bool, ...] = ()
    whole: tuple[bool, ...] = ()
    marks: tuple[str, ...] = ()
    brief_rows: int | None = None


@dataclass(frozen=True)
class Items:
    """A list of sentences under a short lead-in (`Verdicts`, `Findings`)."""

    title: str
    items: tuple[str, ...]


@dataclass(frozen=True)
class Text:
    """One paragraph."""

    text: str


@dataclass(frozen=True)
class Plot:
    """A drawn plot: its file stem, its caption and its PNG bytes."""

    name: str
    caption: str
    png: bytes


Block = Table | Items | Text


@dataclass(frozen=True)
class Document:
    """What one command says: a title, the headline (said first), notices, a lead paragraph of
    facts, the body, plots; `frames` are the analysis DataFrames by file stem (CSV, JUnit),
    `data` a JSON-ready value, `properties` facts a machine format records (JUnit)."""

    title: str
    headline: str = ""
    notices: tuple[str, ...] = ()
    lead: str = ""
    blocks: tuple[Block, ...] = ()
    plots: tuple[Plot, ...] = ()
    frames: Mapping[str, pd.DataFrame] = field(default_factory=dict)
    data: Any = None
    properties: tuple[tuple[str, str], ...] = ()
    name: str = ""
    made_at: float | None = None

    @property
    def tables(self) -> list[Table]:
        return [block for block in self.blocks if isinstance(block, Table)]


# a column of a table: its header and how a row (a named tuple of a DataFrame) is written in it
Column = tuple[str, Callable[[Any], str]]

# headers of columns that hold names or verdicts: a screen never cuts them
WHOLE_HEADERS = ("contender", "attention", "baseline", "verdict", "group", "grouping", "level")


def as_text(header: str, field_name: str | None = None) -> Column:
    """A column showing a row's field (named as the header unless given) as it is."""
    return header, lambda row: str(getattr(row, field_name or header))


def column_table(
    name: str,
    title: str,
    frame: pd.DataFrame,
    columns: list[Column],
    note: str = "",
    optional: tuple[str, ...] = (),
) -> Table:
    """One row per row of `frame`, each cell written as its column says."""
    header = [heading for heading, _ in columns]
    rows = [[cell(row) for _, cell in columns] for row in frame.itertuples()]
    return table(name, title, header, rows, note, optional=optional)


def table(
    name: str,
    title: str,
    header: list[str],
    rows: list[list[str]],
    note: str = "",
    optional: tuple[str, ...] = (),
    marks: list[str] | None = None,
    right: tuple[bool, ...] | None = None,
    brief_rows: int | None = None,
) -> Table:
    """A Table whose numeric columns are found from their cells, with the legend of the terms
    its header uses; `optional` names the headers a narrow screen may drop."""
    if right is None:
        right = tuple(
            all(_numeric(row[i]) for row in rows) if rows else False for i in range(len(header))
        )
    return Table(
        name,
        title,
        tuple(header),
        tuple(tuple(r) for r in rows),
        right,
        note,
        legend_for(header),
        tuple(h in optional for h in header),
        tuple(i == 0 or h.startswith(WHOLE_HEADERS) for i, h in enumerate(header)),
        tuple(marks or ()),
        brief_rows,
    )


def _numeric(text: str) -> bool:
    stripped = text.replace(",", "").replace("±", " ").replace(" to ", " ").lstrip("<").split()
    try:
        return bool(stripped) and all(s == "-" or float(s) is not None for s in stripped)
    except ValueError:
        return False

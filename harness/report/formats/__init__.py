"""Report formats: each renders any Document (harness.report.documents) as text or files;
`show`, `report` and `gate` choose theirs from FORMATS. A new format is one module and one
entry here."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from harness.output_files import write_output
from harness.report.documents.document import Document
from harness.report.formats import csv, html, json, junit, latex, markdown, terminal


@dataclass(frozen=True)
class Format:
    """`render` gives the document as text; `write` puts it into a report folder (`file`
    there, or a folder of files) and returns the paths written. `option` is its --format
    value; `in_report`: the `report` command writes it."""

    name: str
    option: str
    render: Callable[[Document], str]
    file: str
    in_report: bool = False
    files: Callable[[Document, Path], list[Path]] | None = None  # a format of several files

    def write(self, document: Document, folder: Path) -> list[Path]:
        if self.files is not None:
            return self.files(document, folder / self.file)
        return [write_output(folder / self.file, self.render(document))]


FORMATS: dict[str, Format] = {
    entry.name: entry
    for entry in (
        Format("terminal", "table", terminal.render, "report.txt"),
        Format("markdown", "md", markdown.render, "report.md", in_report=True),
        Format("html", "html", html.render, "report.html", in_report=True),
        Format("latex", "tex", latex.render, "report.tex", in_report=True),
        Format("csv", "csv", csv.render, "csv", in_report=True, files=csv.write),
        Format("json", "json", json.render, "report.json"),
        Format("junit", "junit", junit.render, "junit.xml"),
    )
}


def by_option(option: str) -> Format:
    """The format a --format value names."""
    return next(entry for entry in FORMATS.values() if entry.option == option)


# the formats each printing command offers, by name (`report` writes those marked in_report)
SHOW_FORMATS = ("terminal", "json", "csv", "markdown")
DESCRIBE_FORMATS = ("terminal", "json")


def options(names: tuple[str, ...]) -> tuple[str, ...]:
    """The --format values of the named formats."""
    return tuple(FORMATS[name].option for name in names)

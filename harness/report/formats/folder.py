"""Write a Document into a report folder: its plots as plots/NAME.png, then every format the
`report` command writes (harness.report.formats.FORMATS)."""

from __future__ import annotations

from pathlib import Path

from harness.errors import InputError
from harness.output_files import output_folder, write_output
from harness.report.documents.document import Document
from harness.report.formats import FORMATS


def prepared(out: str | Path) -> Path:
    """The report folder, created; a bad folder fails before anything is drawn."""
    out = Path(out)
    if out.exists() and not out.is_dir():
        raise InputError(f"{out}: --out is a file; allowed: a folder (created if missing)")
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as error:
        raise InputError(f"{out}: cannot write the report ({error.strerror})") from None
    return out


def write_plots(document: Document, folder: Path) -> list[Path]:
    plots = output_folder(folder / "plots")
    return [write_output(plots / f"{plot.name}.png", plot.png) for plot in document.plots]


def write_report(document: Document, out: str | Path) -> list[Path]:
    """plots/*.png, then report.md, report.html, report.tex and csv/*.csv under `out`."""
    out = prepared(out)
    try:
        written = write_plots(document, out)
        for entry in FORMATS.values():
            if entry.in_report:
                written += entry.write(document, out)
        return written
    except OSError as error:
        raise InputError(f"{out}: cannot write the report ({error.strerror})") from None

"""Write every report format of one suite into a folder.

Each format is one writer behind the same interface, `write(report, plots, folder, trend)`
returning the paths it wrote; a new format is one new module and one entry in WRITERS.
`plots` maps plot names to PNG bytes (harness.report.plots); `trend` is the gate-history plot
(harness.report.trend) or None.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from harness.analysis.suite_report import SuiteReport
from harness.errors import InputError
from harness.output_files import output_folder, write_output
from harness.report import csv, html, latex, markdown
from harness.report.plots import figures

Writer = Callable[[SuiteReport, dict[str, bytes], Path, bytes | None], list[Path]]


def _text(path: Path, text: str) -> list[Path]:
    return [write_output(path, text)]


def write_plots(
    report: SuiteReport, plots: dict[str, bytes], folder: Path, trend: bytes | None
) -> list[Path]:
    """plots/NAME.png for every plot, and plots/gate_trend.png when there is a trend."""
    plots_folder = output_folder(folder / "plots")
    pictures = dict(plots) | ({"gate_trend": trend} if trend is not None else {})
    return [write_output(plots_folder / f"{name}.png", png) for name, png in pictures.items()]


WRITERS: dict[str, Writer] = {
    "plots": write_plots,
    "markdown": lambda r, p, f, t: _text(f / "report.md", markdown.render(r, list(p))),
    "html": lambda r, p, f, t: _text(f / "report.html", html.render(r, p, t)),
    "latex": lambda r, p, f, t: _text(f / "report.tex", latex.render(r)),
    "csv": lambda r, p, f, t: csv.write(r, f / "csv"),
}


def write_report(report: SuiteReport, out: str | Path, trend: bytes | None = None) -> list[Path]:
    """report.md, report.html, report.tex, csv/*.csv and plots/*.png under `out`.

    `trend` is the gate-history plot (PNG); when given it is saved and shown in the HTML page.
    """
    out = Path(out)
    if out.exists() and not out.is_dir():
        raise InputError(f"{out}: --out is a file; allowed: a folder (created if missing)")
    try:
        out.mkdir(parents=True, exist_ok=True)  # before drawing: a bad folder fails fast
        plots = figures(report)
        return [path for writer in WRITERS.values() for path in writer(report, plots, out, trend)]
    except OSError as error:
        raise InputError(f"{out}: cannot write the report ({error.strerror})") from None

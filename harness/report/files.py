"""Write every report format of one suite into a folder."""

from __future__ import annotations

from pathlib import Path

from harness.api import SuiteReport
from harness.errors import InputError
from harness.report import csv, html, latex, markdown
from harness.report.plots import figures


def write_report(report: SuiteReport, out: str | Path, trend: bytes | None = None) -> list[Path]:
    """report.md, report.html, report.tex, csv/*.csv and plots/*.png under `out`.

    `trend` is the gate-history plot (PNG); when given it is saved and shown in the HTML page.
    """
    out = Path(out)
    if out.exists() and not out.is_dir():
        raise InputError(f"{out}: --out is a file; allowed: a folder (created if missing)")
    (out / "plots").mkdir(parents=True, exist_ok=True)
    plots = figures(report)
    written = []
    for name, png in plots.items():
        path = out / "plots" / f"{name}.png"
        path.write_bytes(png)
        written.append(path)
    if trend is not None:
        (out / "plots" / "gate_trend.png").write_bytes(trend)
        written.append(out / "plots" / "gate_trend.png")
    pages = {
        "report.md": markdown.render(report, list(plots)),
        "report.html": html.render(report, plots, trend),
        "report.tex": latex.render(report),
    }
    for name, text in pages.items():
        path = out / name
        path.write_text(text, encoding="utf-8")
        written.append(path)
    return written + csv.write(report, out / "csv")

"""The report's analysis tables as CSV files, one per table, at full precision."""

from __future__ import annotations

import json
from pathlib import Path

import pandas as pd

from harness.analysis.suite_report import SuiteReport
from harness.formatting import visible
from harness.output_files import output_folder, write_output
from harness.report.breakdown import report_frames


def _cell(value: object) -> object:
    """Dicts (ablation points) as JSON text, so a CSV cell holds one value; hidden characters
    of text shown (harness.formatting.visible)."""
    if isinstance(value, dict):
        return json.dumps(value, sort_keys=True)
    return visible(value) if isinstance(value, str) else value


def write(report: SuiteReport, folder: Path) -> list[Path]:
    """One CSV per non-empty analysis table in `folder`; returns the paths written."""
    output_folder(folder)
    written = []
    for name, frame in report_frames(report).items():
        plain = frame.apply(lambda column: column.map(_cell)) if not frame.empty else frame
        written.append(
            write_output(folder / f"{name}.csv", pd.DataFrame(plain).to_csv(index=False))
        )
    return written

"""The report's analysis tables as CSV files, one per table, at full precision."""

from __future__ import annotations

import json
from pathlib import Path

import pandas as pd

from harness.analysis.suite_report import SuiteReport
from harness.report.breakdown import report_frames


def _cell(value: object) -> object:
    """Dicts (ablation points) as JSON text, so a CSV cell holds one value."""
    return json.dumps(value, sort_keys=True) if isinstance(value, dict) else value


def write(report: SuiteReport, folder: Path) -> list[Path]:
    """One CSV per non-empty analysis table in `folder`; returns the paths written."""
    folder.mkdir(parents=True, exist_ok=True)
    written = []
    for name, frame in report_frames(report).items():
        path = folder / f"{name}.csv"
        plain = frame.apply(lambda column: column.map(_cell)) if not frame.empty else frame
        pd.DataFrame(plain).to_csv(path, index=False)
        written.append(path)
    return written

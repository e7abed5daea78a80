"""A Document's frames as CSV at full precision: one file per frame in a folder, or all of them
as text, one after another."""

from __future__ import annotations

import json
from pathlib import Path

import pandas as pd

from harness.formatting import visible
from harness.output_files import output_folder, write_output
from harness.report.documents.document import Document


def _cell(value: object) -> object:
    """Dicts (ablation points) as JSON text, so a CSV cell holds one value; hidden characters
    of text shown (harness.formatting.visible)."""
    if isinstance(value, dict):
        return json.dumps(value, sort_keys=True)
    return visible(value) if isinstance(value, str) else value


def _plain(frame: pd.DataFrame) -> pd.DataFrame:
    return pd.DataFrame(frame.apply(lambda column: column.map(_cell)) if not frame.empty else frame)


def render(document: Document) -> str:
    """Every frame as CSV text, frames separated by a blank line."""
    return "\n".join(_plain(frame).to_csv(index=False) for frame in document.frames.values())


def write(document: Document, folder: Path) -> list[Path]:
    """One CSV per frame in `folder`; returns the paths written."""
    output_folder(folder)
    return [
        write_output(folder / f"{name}.csv", _plain(frame).to_csv(index=False))
        for name, frame in document.frames.items()
    ]

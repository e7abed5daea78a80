"""A Document's data as JSON text (records, profiles): one value, indented."""

from __future__ import annotations

import json

from harness.report.documents.document import Document


def render(document: Document) -> str:
    """The document's JSON-ready data; without data, its frames as lists of records."""
    data = document.data
    if data is None:
        data = {name: frame.to_dict(orient="records") for name, frame in document.frames.items()}
    return json.dumps(data, indent=1, default=float)

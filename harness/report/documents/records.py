"""Stored runs as a Document for `heedful show --format json|csv|md`: one record per run."""

from __future__ import annotations

import json
from collections.abc import Mapping

import pandas as pd

from harness.formatting import missing
from harness.report.documents.document import Document, table
from harness.results import NodePredictions
from harness.storage.store import TEST_COLUMNS

RECORD_FIELDS = (
    "suite",
    "contender",
    "model",
    "options",
    "point",
    "seed",
    "metric",
    "val_metric",
    "test_metric",
    *TEST_COLUMNS,
    "epochs",
    "best_epoch",
    "seconds",
    "seconds_per_epoch",
    "params",
    "peak_mb",
    "key",
    "extras",  # attention diagnostics, arrival figures, tuned settings, ...
)

# link prediction metrics appear only in the records of runs that have them
LINK_ONLY = ("test_average_precision", "test_hits_at_k")


def records(runs: pd.DataFrame) -> list[dict]:
    """One plain dict per run with the documented result fields."""
    out = []
    for row in runs.to_dict(orient="records"):
        record = {
            field: _plain(row[field])
            for field in RECORD_FIELDS
            if field not in LINK_ONLY or _plain(row[field]) is not None
        }
        record["val"] = record.pop("val_metric")
        record["test"] = record.pop("test_metric")
        out.append(record)
    return out


def _plain(value: object) -> object:
    """NaN becomes None so that the JSON output stays valid JSON."""
    return None if missing(value) else value


def records_document(
    runs: pd.DataFrame, predictions: Mapping[str, NodePredictions] | None = None
) -> Document:
    """The runs as JSON-ready records (with `predictions` by run key, each record also holds
    its test nodes and their class probabilities, null when none are stored), as one flat
    frame (dicts as JSON text) and as a table without the long options and extras."""
    out = records(runs)
    if predictions is not None:
        for record in out:
            stored = predictions.get(record["key"])
            record["predictions"] = None if stored is None else stored.as_dict()
    frame = flat(runs)
    shown = frame.drop(columns=["options", "extras"])  # too long for a table cell
    rows = [[str(value) for value in row] for row in shown.itertuples(index=False)]
    header = [str(column) for column in shown.columns]
    part = table("runs", "", header, rows, right=(False,) * len(header))
    return Document(title="", blocks=(part,), frames={"runs": frame}, data=out, name="runs")


def flat(runs: pd.DataFrame) -> pd.DataFrame:
    frame = pd.DataFrame(records(runs))
    for column in ("options", "point", "extras"):
        frame[column] = frame[column].map(lambda v: json.dumps(v, sort_keys=True))
    return frame

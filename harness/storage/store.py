"""Result store: each finished run is committed the moment it ends, in an SQLite file or a
PostgreSQL database (harness/storage/database.py says which).

A run is stored under (suite, contender, key), where key hashes what determines its result,
so re-running a suite skips finished runs and a run is never stored twice, even when two
submitters race on the same suite.
"""

from __future__ import annotations

import base64
import json
import time
from collections.abc import Iterable
from pathlib import Path
from typing import Any

import pandas as pd

import harness
from harness.storage.database import (
    Location,
    insert,
    locate,
    opened,
    patient,
    prepare,
    read_rows,
)
from harness.storage.tables import PREDICTIONS, RUNS, TEST_COLUMNS
from harness.storage.tables import TEST_METRICS as TEST_METRICS  # execution fills one per metric

DEFAULT_STORE = Path("runs/heedful.db")
JSON_COLUMNS = ("options", "point", "curve", "extras")
MEASURED_COLUMNS = ("curve", "extras")  # kept to six significant digits; settings kept exactly
# NaN is kept as NULL; read back, an all-NULL column would hold None instead of NaN
NULLABLE_NUMBERS = ("val_metric", "test_metric", *TEST_COLUMNS)

Store = str | Path | Location


@patient
def finished_keys(store: Store, suite: str) -> set[tuple[str, str]]:
    """(contender, key) pairs already stored for a suite (none when the store is not made yet)."""
    location = locate(store)
    if location.path is not None and not location.path.exists():
        return set()
    with opened(location, write=False) as connection:
        rows = read_rows(connection, RUNS, {"suite": [suite]})
    return {(row["contender"], row["key"]) for row in rows}


def significant(value: Any) -> Any:
    """Floats in a JSON value rounded to six significant digits: curves and diagnostics are
    measured on a few hundred nodes, so the digits past six are noise that costs space."""
    if isinstance(value, float):
        return float(f"{value:.6g}")
    if isinstance(value, list | tuple):
        return [significant(item) for item in value]
    if isinstance(value, dict):
        return {key: significant(item) for key, item in value.items()}
    return value


@patient
def save_run(store: Store, record: dict[str, Any]) -> bool:
    """Insert one finished run (and its predictions, given as text) in one transaction;
    False when it was stored already."""
    row = dict(record)
    predictions = row.pop("predictions", None)
    for column in JSON_COLUMNS:
        value = row.get(column, {} if column != "curve" else [])
        if column in MEASURED_COLUMNS:
            value = significant(value)
        row[column] = json.dumps(value, sort_keys=True)
    for column in NULLABLE_NUMBERS:
        if row.get(column) is not None and row[column] != row[column]:
            row[column] = None  # NaN
    row.setdefault("version", harness.__version__)
    row.setdefault("finished_at", time.time())
    with opened(store, write=True) as connection:
        prepare(connection, RUNS)
        stored = insert(connection, RUNS, row, replace=False)
        if predictions is not None:
            prepare(connection, PREDICTIONS)
            encoded = {"key": row["key"], "encoded": base64.b64decode(predictions)}
            insert(connection, PREDICTIONS, encoded, replace=False)
        return stored


@patient
def load_runs(store: Store, suites: Iterable[str] | None = None) -> pd.DataFrame:
    """Stored runs as a DataFrame (JSON columns decoded), oldest first."""
    where = None if suites is None else {"suite": list(suites)}
    with opened(store, write=False) as connection:
        rows = read_rows(connection, RUNS, where, order=("finished_at",))
    frame = pd.DataFrame(rows, columns=[column.name for column in RUNS.columns])
    for column in JSON_COLUMNS:
        frame[column] = frame[column].map(json.loads)
    for column in NULLABLE_NUMBERS:
        frame[column] = frame[column].astype(float)
    return frame


@patient
def load_encoded_predictions(store: Store, keys: Iterable[str]) -> dict[str, bytes]:
    """Stored prediction blobs of these run keys (keys without any are left out)."""
    wanted = sorted(set(keys))
    found: dict[str, bytes] = {}
    with opened(store, write=False) as connection:
        for start in range(0, len(wanted), 500):  # well below any bound-parameter limit
            chunk = {"key": wanted[start : start + 500]}
            rows = read_rows(connection, PREDICTIONS, chunk)
            found.update((row["key"], bytes(row["encoded"])) for row in rows)
    return found

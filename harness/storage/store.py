"""Result store: one SQLite file; each finished run is committed the moment it ends.

A run is stored under (suite, contender, key), where key hashes what determines its result,
so re-running a suite skips finished runs and a run is never stored twice.
"""

from __future__ import annotations

import json
import sqlite3
import time
from collections.abc import Iterable
from contextlib import closing
from pathlib import Path
from typing import Any

import pandas as pd

import harness
from harness.errors import InputError

DEFAULT_STORE = Path("runs/heedful.db")
JSON_COLUMNS = ("options", "point", "curve", "extras")
# SQLite keeps NaN as NULL; read back, an all-NULL column would hold None instead of NaN
NULLABLE_NUMBERS = ("val_metric", "test_metric", "test_accuracy", "test_macro_f1", "test_roc_auc")

SCHEMA = """
CREATE TABLE IF NOT EXISTS runs (
    suite TEXT NOT NULL,
    contender TEXT NOT NULL,
    key TEXT NOT NULL,
    model TEXT NOT NULL,
    options TEXT NOT NULL,
    point TEXT NOT NULL,
    seed INTEGER NOT NULL,
    metric TEXT NOT NULL,
    val_metric REAL,
    test_metric REAL,
    test_accuracy REAL,
    test_macro_f1 REAL,
    test_roc_auc REAL,
    epochs INTEGER NOT NULL,
    best_epoch INTEGER NOT NULL,
    seconds REAL NOT NULL,
    seconds_per_epoch REAL NOT NULL,
    params INTEGER NOT NULL,
    peak_mb REAL NOT NULL,
    curve TEXT NOT NULL,
    extras TEXT NOT NULL,
    version TEXT NOT NULL,
    finished_at REAL NOT NULL,
    PRIMARY KEY (suite, contender, key)
)
"""


def connect(path: str | Path, create: bool = True) -> sqlite3.Connection:
    """Open the store (WAL, waits for other writers); refuses files that are not a store."""
    path = Path(path)
    if not create and not path.exists():
        raise InputError(f"{path}: result store not found; run a suite first or pass --store")
    if path.exists() and path.is_dir():
        raise InputError(f"{path}: result store path is a directory; allowed: an SQLite file")
    path.parent.mkdir(parents=True, exist_ok=True)
    connection = sqlite3.connect(path, timeout=60)
    try:
        connection.execute("PRAGMA journal_mode=WAL")
        connection.execute("PRAGMA busy_timeout=60000")
        connection.execute(SCHEMA)
        connection.commit()
    except sqlite3.DatabaseError as error:
        connection.close()
        raise InputError(f"{path}: not a Heedful result store ({error})") from None
    return connection


def finished_keys(path: str | Path, suite: str) -> set[tuple[str, str]]:
    """(contender, key) pairs already stored for a suite."""
    with closing(connect(path)) as connection:
        rows = connection.execute("SELECT contender, key FROM runs WHERE suite = ?", (suite,))
        return {(contender, key) for contender, key in rows}


def save_run(path: str | Path, record: dict[str, Any]) -> bool:
    """Insert one finished run and commit; False when it was stored already."""
    row = dict(record)
    for column in JSON_COLUMNS:
        row[column] = json.dumps(row.get(column, {} if column != "curve" else []), sort_keys=True)
    row.setdefault("version", harness.__version__)
    row.setdefault("finished_at", time.time())
    columns = ", ".join(row)
    marks = ", ".join("?" for _ in row)
    with closing(connect(path)) as connection:
        cursor = connection.execute(
            f"INSERT OR IGNORE INTO runs ({columns}) VALUES ({marks})", tuple(row.values())
        )
        connection.commit()
        return cursor.rowcount == 1


def load_runs(path: str | Path, suites: Iterable[str] | None = None) -> pd.DataFrame:
    """Stored runs as a DataFrame (JSON columns decoded), oldest first."""
    with closing(connect(path, create=False)) as connection:
        query = "SELECT * FROM runs"
        wanted = list(suites) if suites is not None else None
        if wanted is not None:
            query += f" WHERE suite IN ({', '.join('?' for _ in wanted)})"
        frame = pd.read_sql_query(query + " ORDER BY finished_at, rowid", connection, params=wanted)
    for column in JSON_COLUMNS:
        frame[column] = frame[column].map(json.loads)
    for column in NULLABLE_NUMBERS:
        frame[column] = frame[column].astype(float)
    return frame

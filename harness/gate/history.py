"""Gate history: every gate run appended to the result store, one row per contender.

Kept in its own table of the same SQLite file, so `heedful history` and the HTML report can
show how each contender's metric and costs moved from night to night.
"""

from __future__ import annotations

import json
import uuid
from contextlib import closing
from pathlib import Path

import pandas as pd

from harness.gate.compare import GateOutcome
from harness.storage import store

SCHEMA = """
CREATE TABLE IF NOT EXISTS gate_history (
    gate_id TEXT NOT NULL,
    suite TEXT NOT NULL,
    contender TEXT NOT NULL,
    gated_at REAL NOT NULL,
    metric TEXT NOT NULL,
    metric_mean REAL,
    baseline_mean REAL,
    difference REAL,
    difference_low REAL,
    difference_high REAL,
    p_value REAL,
    seconds_per_epoch REAL,
    peak_mb REAL,
    verdicts TEXT NOT NULL,
    contender_status TEXT NOT NULL,
    gate_status TEXT NOT NULL,
    environment TEXT NOT NULL,
    environment_differs INTEGER NOT NULL,
    PRIMARY KEY (gate_id, contender)
)
"""
COLUMNS = (
    "gate_id",
    "suite",
    "contender",
    "gated_at",
    "metric",
    "metric_mean",
    "baseline_mean",
    "difference",
    "difference_low",
    "difference_high",
    "p_value",
    "seconds_per_epoch",
    "peak_mb",
    "verdicts",
    "contender_status",
    "gate_status",
    "environment",
    "environment_differs",
)
STATUS_ORDER = ("fail", "warn", "pass", "skip")


def _connect(path: str | Path, create: bool = True):
    connection = store.connect(path, create=create)
    connection.execute(SCHEMA)
    connection.commit()
    return connection


def append(path: str | Path, outcome: GateOutcome) -> str:
    """Store one gate run (all its contenders in one transaction); returns its id."""
    gate_id = uuid.uuid4().hex[:16]
    rows = []
    for contender in outcome.contender_seconds:
        checks = outcome.of(contender)
        metric, time_check, memory = checks["metric"], checks["time"], checks["memory"]
        statuses = {name: check.status for name, check in checks.items()}
        worst = next(s for s in STATUS_ORDER if s in statuses.values())
        rows.append(
            (
                gate_id,
                outcome.suite,
                contender,
                outcome.gated_at,
                outcome.metric,
                metric.figures["current"],
                metric.figures["baseline"],
                metric.figures["difference"],
                metric.figures["low"],
                metric.figures["high"],
                metric.figures["p_value"],
                time_check.figures["current"],
                memory.figures["current"],
                json.dumps(statuses, sort_keys=True),
                worst,
                outcome.status,
                json.dumps(outcome.environment, sort_keys=True),
                int(bool(outcome.environment_differences)),
            )
        )
    marks = ", ".join("?" for _ in COLUMNS)
    with closing(_connect(path)) as connection:
        connection.executemany(
            f"INSERT INTO gate_history ({', '.join(COLUMNS)}) VALUES ({marks})", rows
        )
        connection.commit()
    return gate_id


def load_history(path: str | Path, suite: str | None = None) -> pd.DataFrame:
    """Gate history as a DataFrame, oldest first (`verdicts`, `environment` decoded)."""
    with closing(_connect(path, create=False)) as connection:
        query, params = "SELECT * FROM gate_history", []
        if suite is not None:
            query, params = query + " WHERE suite = ?", [suite]
        frame = pd.read_sql_query(query + " ORDER BY gated_at, rowid", connection, params=params)
    for column in ("verdicts", "environment"):
        frame[column] = frame[column].map(json.loads)
    frame["environment_differs"] = frame["environment_differs"].astype(bool)
    return frame


def stored_history(path: str | Path, suite: str) -> pd.DataFrame:
    """A suite's gate history, or an empty frame when the store or its history is missing."""
    if not Path(path).is_file():
        return pd.DataFrame()
    with closing(store.connect(path, create=False)) as connection:
        found = connection.execute(
            "SELECT name FROM sqlite_master WHERE type = 'table' AND name = 'gate_history'"
        ).fetchone()
    return load_history(path, suite) if found else pd.DataFrame()

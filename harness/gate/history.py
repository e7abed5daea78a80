"""Gate history: every gate run appended to the result store, one row per contender.

Kept in its own table of the same store, so `heedful history` and the HTML report can
show how each contender's metric and costs moved from night to night.
"""

from __future__ import annotations

import json
import uuid

import pandas as pd

from harness.gate.compare import GateOutcome
from harness.storage.database import has_table, opened, prepare, read_rows
from harness.storage.store import Store
from harness.storage.tables import GATE_HISTORY

COLUMNS = tuple(column.name for column in GATE_HISTORY.columns)
STATUS_ORDER = ("fail", "warn", "pass", "skip")


def append(store: Store, outcome: GateOutcome) -> str:
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
    with opened(store, write=True) as connection:
        prepare(connection, GATE_HISTORY)
        connection.execute(
            GATE_HISTORY.insert(), [dict(zip(COLUMNS, row, strict=True)) for row in rows]
        )
    return gate_id


def load_history(store: Store, suite: str | None = None) -> pd.DataFrame:
    """Gate history as a DataFrame, oldest first (`verdicts`, `environment` decoded); empty
    when the store holds no gate runs."""
    where = None if suite is None else {"suite": [suite]}
    with opened(store, write=False) as connection:
        rows = read_rows(connection, GATE_HISTORY, where, order=("gated_at",))
    frame = pd.DataFrame(rows, columns=list(COLUMNS))
    for column in ("verdicts", "environment"):
        frame[column] = frame[column].map(json.loads)
    frame["environment_differs"] = frame["environment_differs"].astype(bool)
    return frame


def stored_history(store: Store, suite: str) -> pd.DataFrame:
    """A suite's gate history, or an empty frame when the store or its history is missing."""
    if not has_table(store, GATE_HISTORY.name):
        return pd.DataFrame()
    return load_history(store, suite)

"""Gate history: every gate run appended to the result store, one row per contender.

Kept in its own table of the same store, so `heedful history` and the HTML report can
show how each contender's metric and costs moved from night to night. The gate turns its
outcome into `GateRecord`s (harness/gate/compare.py); this module only stores and reads them.
"""

from __future__ import annotations

import json
import uuid
from collections.abc import Sequence
from dataclasses import asdict, dataclass
from typing import Any

import pandas as pd

from harness.storage.database import has_table, opened, patient, prepare, read_rows
from harness.storage.store import Store
from harness.storage.tables import GATE_HISTORY

COLUMNS = tuple(column.name for column in GATE_HISTORY.columns)


@dataclass(frozen=True)
class GateRecord:
    """One contender's row of one gate run: its figures, its verdicts and where the gate ran."""

    suite: str
    contender: str
    gated_at: float  # seconds since the epoch
    metric: str
    metric_mean: float
    baseline_mean: float
    difference: float  # current minus baseline mean, with its interval's ends
    difference_low: float
    difference_high: float
    p_value: float
    seconds_per_epoch: float
    peak_mb: float
    verdicts: dict[str, str]  # check name -> status
    contender_status: str  # the worst of its verdicts
    gate_status: str
    environment: dict[str, Any]
    environment_differs: bool  # from the baseline's environment


@patient
def append(store: Store, records: Sequence[GateRecord]) -> str:
    """Store one gate run (all its contenders in one transaction); returns its id."""
    gate_id = uuid.uuid4().hex[:16]
    rows = []
    for record in records:
        row = {"gate_id": gate_id, **asdict(record)}
        row["verdicts"] = json.dumps(record.verdicts, sort_keys=True)
        row["environment"] = json.dumps(record.environment, sort_keys=True)
        row["environment_differs"] = int(record.environment_differs)
        rows.append(row)
    with opened(store, write=True) as connection:
        prepare(connection, GATE_HISTORY)
        connection.execute(GATE_HISTORY.insert(), rows)
    return gate_id


@patient
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

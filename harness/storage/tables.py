"""Every table of the result store, declared in one place.

Names, types and constraints are what stores written by earlier versions hold, so those stores
keep reading; a column added later must be nullable (harness/storage/database.py adds it to
older stores when they are next written). Columns are listed in the order they are created,
grouped by kind.
"""

from __future__ import annotations

from sqlalchemy import BigInteger, Column, Double, Integer, LargeBinary, MetaData, Table, Text
from sqlalchemy.types import TypeEngine

from harness.schema.tasks import metric_names

# every test metric of every task has a column `test_NAME`; a run fills its task's, NULL elsewhere
TEST_METRICS = metric_names()
TEST_COLUMNS = tuple(f"test_{name}" for name in TEST_METRICS)
# a gate run's figures for one contender; NULL where a check had none
GATE_FIGURES = (
    "metric_mean",
    "baseline_mean",
    "difference",
    "difference_low",
    "difference_high",
    "p_value",
    "seconds_per_epoch",
    "peak_mb",
)


def key(*names: str) -> list[Column]:
    """Text columns of the primary key."""
    return [Column(name, Text, primary_key=True) for name in names]


def required(kind: type[TypeEngine], *names: str) -> list[Column]:
    """Columns every row fills (NOT NULL)."""
    return [Column(name, kind, nullable=False) for name in names]


def optional(kind: type[TypeEngine], *names: str) -> list[Column]:
    """Nullable columns."""
    return [Column(name, kind) for name in names]


METADATA = MetaData()
# one finished run (harness/storage/store.py); test_average_precision was added to older stores
RUNS = Table(
    "runs",
    METADATA,
    *key("suite", "contender", "key"),
    *required(Text, "model", "options", "point"),
    *required(Integer, "seed"),
    *required(Text, "metric"),
    *optional(Double, "val_metric", "test_metric", *TEST_COLUMNS),
    *required(Integer, "epochs", "best_epoch"),
    *required(Double, "seconds", "seconds_per_epoch"),
    *required(BigInteger, "params"),
    *required(Double, "peak_mb"),
    *required(Text, "curve", "extras", "version"),
    *required(Double, "finished_at"),
)
# test-node probabilities of a run (storage/predictions.py); a key fixes the result, so runs
# of one key in several suites share one row, and `show` reads them only when asked
PREDICTIONS = Table("predictions", METADATA, *key("key"), *required(LargeBinary, "encoded"))
# the profile of a suite's data (harness/storage/profiles.py)
PROFILES = Table(
    "profiles",
    METADATA,
    *key("suite", "data_key"),
    *required(Text, "data", "profile"),
    *required(Double, "stored_at"),
)
# one contender's row of one gate run (harness/storage/gate_history.py)
GATE_HISTORY = Table(
    "gate_history",
    METADATA,
    *key("gate_id"),
    *required(Text, "suite"),
    *key("contender"),
    *required(Double, "gated_at"),
    *required(Text, "metric"),
    *optional(Double, *GATE_FIGURES),
    *required(Text, "verdicts", "contender_status", "gate_status", "environment"),
    *required(Integer, "environment_differs"),
)

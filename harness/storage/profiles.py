"""Stored dataset profiles: one per (suite, data section), written whenever a suite runs."""

from __future__ import annotations

import json
import time
from pathlib import Path

from pydantic import BaseModel

from harness.data import load_graph
from harness.data.assemble import cleaning_notes, require_labels
from harness.data.profile import DatasetProfile, profile_collection, profile_graph
from harness.digest import text_digest
from harness.schema.tasks import task_kind
from harness.storage.database import insert, opened, patient, prepare, read_rows
from harness.storage.store import Store
from harness.storage.tables import PROFILES


def data_key(section: BaseModel) -> str:
    """Hash of a data section (for table files it includes their content digest)."""
    return text_digest(section.model_dump_json())


@patient
def save_profile(store: Store, suite: str, section: BaseModel, profile: DatasetProfile) -> None:
    """Store (or refresh) the profile of a suite's data next to its runs."""
    row = {
        "suite": suite,
        "data_key": data_key(section),
        "data": section.model_dump_json(),
        "profile": json.dumps(profile.as_dict(), sort_keys=True),
        "stored_at": time.time(),
    }
    with opened(store, write=True) as connection:
        prepare(connection, PROFILES)
        insert(connection, PROFILES, row, replace=True)


@patient
def load_profiles(store: Store, suite: str) -> list[DatasetProfile]:
    """Stored profiles of a suite, oldest first."""
    with opened(store, write=False) as connection:
        rows = read_rows(connection, PROFILES, {"suite": [suite]}, order=("stored_at",))
    return [DatasetProfile.from_dict(json.loads(row["profile"])) for row in rows]


def suite_profile(suite: BaseModel, source: str) -> tuple[DatasetProfile, list[str]]:
    """The profile of a suite's data, and notes on what loading had to clean; node-label facts
    only when the suite's task reads node labels (then the labels must be usable)."""
    data = load_graph(suite.data)
    if suite.data.many_graphs:
        return profile_collection(data), list(data.skipped)
    labels = task_kind(suite.task).node_labels
    if labels:
        require_labels(data)
    return profile_graph(data, labels), cleaning_notes(data, f"{source}: data")


def record_profile(suite: BaseModel, path: str | Path) -> DatasetProfile:
    """Profile a suite's data and store it with the suite's runs (called by `heedful run`)."""
    profile, _ = suite_profile(suite, suite.name)
    save_profile(path, suite.name, suite.data, profile)
    return profile

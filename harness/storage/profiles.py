"""Stored dataset profiles: one per (suite, data section), written whenever a suite runs."""

from __future__ import annotations

import hashlib
import json
import time
from contextlib import closing
from pathlib import Path

from pydantic import BaseModel

from harness.data import load_graph
from harness.data.assemble import cleaning_notes
from harness.data.profile import DatasetProfile, profile_graph
from harness.storage.store import connect

SCHEMA = """
CREATE TABLE IF NOT EXISTS profiles (
    suite TEXT NOT NULL,
    data_key TEXT NOT NULL,
    data TEXT NOT NULL,
    profile TEXT NOT NULL,
    stored_at REAL NOT NULL,
    PRIMARY KEY (suite, data_key)
)
"""


def data_key(section: BaseModel) -> str:
    """Hash of a data section (for table files it includes their content digest)."""
    text = section.model_dump_json()
    return hashlib.sha256(text.encode()).hexdigest()[:24]


def save_profile(path: str | Path, suite: str, section: BaseModel, profile: DatasetProfile) -> None:
    """Store (or refresh) the profile of a suite's data next to its runs."""
    with closing(connect(path)) as connection:
        connection.execute(SCHEMA)
        connection.execute(
            "INSERT OR REPLACE INTO profiles VALUES (?, ?, ?, ?, ?)",
            (
                suite,
                data_key(section),
                section.model_dump_json(),
                json.dumps(profile.as_dict(), sort_keys=True),
                time.time(),
            ),
        )
        connection.commit()


def load_profiles(path: str | Path, suite: str) -> list[DatasetProfile]:
    """Stored profiles of a suite, oldest first."""
    with closing(connect(path, create=False)) as connection:
        connection.execute(SCHEMA)
        rows = connection.execute(
            "SELECT profile FROM profiles WHERE suite = ? ORDER BY stored_at", (suite,)
        ).fetchall()
    return [DatasetProfile.from_dict(json.loads(text)) for (text,) in rows]


def suite_profile(suite: BaseModel, source: str) -> tuple[DatasetProfile, list[str]]:
    """The profile of a suite's data, and notes on what loading had to clean."""
    data = load_graph(suite.data)
    return profile_graph(data), cleaning_notes(data, f"{source}: data")


def record_profile(suite: BaseModel, path: str | Path) -> DatasetProfile:
    """Profile a suite's data and store it with the suite's runs (called by `heedful run`)."""
    profile, _ = suite_profile(suite, suite.name)
    save_profile(path, suite.name, suite.data, profile)
    return profile

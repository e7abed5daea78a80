"""Whether a database is a Heedful result store, asked before anything is written to it, so
that a file or database of another program is never changed (not even its journal mode), and
whether a failed store call means a damaged file or a full disk: one line each.
"""

from __future__ import annotations

import os
from pathlib import Path

from sqlalchemy import Connection, inspect

from harness.errors import InputError
from harness.storage.tables import METADATA

SQLITE_HEADER = b"SQLite format 3\x00"  # the first 16 bytes of every SQLite database file
# a tuning database's tables (Optuna's schema) may share the store's file or database
TUNING_TABLES = frozenset(
    (
        "alembic_version",
        "version_info",
        "studies",
        "study_directions",
        "study_user_attributes",
        "study_system_attributes",
        "trials",
        "trial_params",
        "trial_values",
        "trial_intermediate_values",
        "trial_user_attributes",
        "trial_system_attributes",
        "trial_heartbeats",
    )
)
DAMAGE_WORDS = ("malformed", "database corrupt")
FULL_WORDS = ("database or disk is full", "disk i/o error", "no space left")


def is_sqlite_file(path: Path) -> bool:
    """An empty file is a new store; any other must start with SQLite's header."""
    with path.open("rb") as file:
        start = file.read(len(SQLITE_HEADER))
    return not start or start == SQLITE_HEADER


def _read_only(path: Path) -> bool:
    """Not writable for this user, or marked read-only for everyone (which root would ignore)."""
    return path.exists() and (not os.access(path, os.W_OK) or not path.stat().st_mode & 0o222)


def check_store_path(path: Path, write: bool) -> None:
    """An SQLite store path: a regular SQLite file or none yet, writable when `write`."""
    if path.is_dir():
        raise InputError(f"{path}: result store path is a directory; allowed: an SQLite file")
    if path.exists() and not path.is_file():  # opening a pipe would wait for a writer
        raise InputError(
            f"{path}: the result store is not a regular file (a pipe, device or socket); "
            "allowed: an SQLite file"
        )
    if path.exists() and not is_sqlite_file(path):
        raise InputError(f"{path}: not a Heedful result store (not an SQLite file)")
    if not write:
        if not path.exists():
            raise InputError(f"{path}: result store not found; run a suite first or pass --store")
        return
    folder = path.parent
    folder.mkdir(parents=True, exist_ok=True)
    # SQLite writes a journal beside the file, so the folder must be writable too
    if _read_only(path) or _read_only(folder):
        raise InputError(
            f"{path}: result store is read-only; allowed: a store file and folder this user "
            "can write (reading commands such as show and report work on it as it is)"
        )


def foreign_reason(connection: Connection, shared: bool) -> str | None:
    """Why the database behind `connection` is not a Heedful result store, or None: a table of
    ours that lacks our key columns, or (for a file, not `shared`) only tables of others."""
    present = inspect(connection)
    names = set(present.get_table_names())
    for name in sorted(names & METADATA.tables.keys()):
        columns = {column["name"] for column in present.get_columns(name)}
        keys = [column.name for column in METADATA.tables[name].primary_key.columns]
        missing = [key for key in keys if key not in columns]
        if missing:
            return f"its table '{name}' has no column {', '.join(missing)}"
    others = sorted(names - METADATA.tables.keys() - TUNING_TABLES)
    if not shared and others and not names & METADATA.tables.keys():
        listed = ", ".join(others[:3]) + (", ..." if len(others) > 3 else "")
        return f"it holds tables of another program ({listed}) and none of Heedful's"
    return None


def damaged(line: str) -> bool:
    return any(words in line.lower() for words in DAMAGE_WORDS)


def disk_full(line: str) -> bool:
    return any(words in line.lower() for words in FULL_WORDS)

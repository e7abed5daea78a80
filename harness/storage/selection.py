"""The stored runs of a list of run specs: what every command reads back after running."""

from __future__ import annotations

from pathlib import Path

import pandas as pd

from harness.planning import RunSpec
from harness.storage import store


def spec_runs(
    store_path: str | Path, specs: list[RunSpec], same_contender: bool = True
) -> pd.DataFrame:
    """Stored runs of exactly these specs (same suite, key and contender), oldest first.

    Runs an edited suite stored under its old settings are left out. A compiled spec also takes
    its eager twin (a run whose compiling failed is stored as eager). With `same_contender`
    False a run counts under any contender name (names are labels; the key holds the options).
    """
    if not specs:
        return pd.DataFrame()
    runs = store.load_runs(store_path, sorted({spec.suite for spec in specs}))
    if same_contender:
        wanted = {(spec.suite, key, spec.contender) for spec in specs for key in spec.stored_keys}
        rows = zip(runs["suite"], runs["key"], runs["contender"], strict=True)
    else:
        wanted = {(spec.suite, key) for spec in specs for key in spec.stored_keys}
        rows = zip(runs["suite"], runs["key"], strict=True)
    keep = pd.Series([row in wanted for row in rows], index=runs.index, dtype=bool)
    return runs[keep].reset_index(drop=True)

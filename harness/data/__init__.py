"""Data stage: graphs from a data section, and seeded splits.

Every source returns a PyG `Data` with float features `x`, an undirected, coalesced
`edge_index` without self-loops (a table source with `directed = true` keeps directions), and
integer labels `y` (-1 for unlabelled nodes). Cleaning counts, class names and a split column
travel as extra attributes (see data/assemble.py).
"""

from __future__ import annotations

from collections.abc import Callable

from pydantic import BaseModel
from torch_geometric.data import Data

from harness.data.bundled import digits_graph, karate_club
from harness.data.pyg_datasets import load_pyg
from harness.data.synthetic import contextual_sbm
from harness.data.tables import load_tables

SOURCES: dict[str, Callable[[BaseModel], Data]] = {
    "synthetic": contextual_sbm,
    "tables": load_tables,
    "karate": karate_club,
    "digits": digits_graph,
    "pyg": load_pyg,
}


_CACHE: dict[str, Data] = {}


def load_graph(section: BaseModel) -> Data:
    """The graph of a validated data section; cached per process by the section's content."""
    cache_key = section.model_dump_json()
    if cache_key not in _CACHE:
        if len(_CACHE) >= 8:
            _CACHE.pop(next(iter(_CACHE)))
        _CACHE[cache_key] = SOURCES[section.source](section)
    return _CACHE[cache_key]

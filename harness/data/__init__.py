"""Data stage: graphs from a data section, and seeded splits.

Every source returns a PyG `Data` with float features `x`, an undirected, coalesced
`edge_index` without self-loops (a table source with `directed = true` keeps directions), and
integer labels `y` (-1 for unlabelled nodes). Cleaning counts, class names and a split column
travel as extra attributes (see data/assemble.py). Sources of many small graphs, one label
each, return a `GraphCollection` (data/collection.py) instead.
"""

from __future__ import annotations

from collections.abc import Callable

from pydantic import BaseModel
from torch_geometric.data import Data

from harness.data.atlas import graph_atlas
from harness.data.bundled import digits_graph, karate_club
from harness.data.collection import GraphCollection
from harness.data.graph_tables import load_graph_tables
from harness.data.molecules import load_molecules
from harness.data.motif_graphs import motif_graphs
from harness.data.pyg_datasets import load_pyg
from harness.data.synthetic import contextual_sbm
from harness.data.tables import load_tables

# single graphs (node and link tasks) and collections of graphs (graph classification)
SOURCES: dict[str, Callable[[BaseModel], Data | GraphCollection]] = {
    "synthetic": contextual_sbm,
    "tables": load_tables,
    "karate": karate_club,
    "digits": digits_graph,
    "pyg": load_pyg,
    "molecules": load_molecules,
    "graph_tables": load_graph_tables,
    "synthetic_graphs": motif_graphs,
    "graph_atlas": graph_atlas,
}


_CACHE: dict[str, Data | GraphCollection] = {}
CACHED_GRAPHS = 8


def _keep(cache_key: str, graph: Data | GraphCollection) -> None:
    _CACHE.pop(cache_key, None)
    if len(_CACHE) >= CACHED_GRAPHS:  # the oldest goes
        _CACHE.pop(next(iter(_CACHE)))
    _CACHE[cache_key] = graph


def load_graph(section: BaseModel) -> Data | GraphCollection:
    """The graph (or graphs) of a validated data section; cached per process by the section's
    content."""
    cache_key = section.model_dump_json()
    if cache_key not in _CACHE:
        _keep(cache_key, SOURCES[section.source](section))
    return _CACHE[cache_key]


def keep_loaded(section: BaseModel, graph: Data | GraphCollection) -> None:
    """Make `graph` what load_graph gives for `section` in this process, without reading a
    file: a cluster worker trains on the graph its submitter loaded and sent (the section
    pinned, see DataSource.pinned, so that its content digest is the submitter's)."""
    _keep(section.model_dump_json(), graph)

"""Many small graphs with one label each, kept in PyG's collated form.

A collection holds every graph's nodes and edges in one `Data` (PyG's `InMemoryDataset.collate`:
edge indices stay local to their graph) and the slices where each graph starts, so 100,000
molecules are a handful of tensors rather than 100,000 Python objects. `dataset()` hands PyG's
`DataLoader` the same tensors; `y`, `split_part` and `scaffolds` are per graph.
"""

from __future__ import annotations

import os
import tempfile
import warnings
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path

import torch
from torch_geometric.data import Data, InMemoryDataset

# bumped when what a cached collection holds changes, so old cache files are rebuilt
CACHE_FORMAT = 1


class CollatedGraphs(InMemoryDataset):
    """PyG's in-memory dataset over tensors already collated: no root folder, no processing."""

    def __init__(self, storage: Data, slices: dict[str, torch.Tensor]) -> None:
        super().__init__()
        self.data, self.slices = storage, slices


@dataclass(frozen=True)
class GraphCollection:
    """Graphs `0 .. len - 1`: features `x`, local `edge_index`, optional `edge_attr`, and the
    label `y` of each graph inside `storage`; `slices` say where each graph's rows start."""

    storage: Data
    slices: dict[str, torch.Tensor]
    class_names: list[str]
    split_part: torch.Tensor | None = None  # per graph: 0 train, 1 validation, 2 test, -1 unused
    scaffolds: tuple[str, ...] | None = None  # per graph, for molecules
    skipped: tuple[str, ...] = ()  # one line per input row left out, saying why
    split_origin: str = "data"
    feature_names: tuple[str, ...] = field(default=())

    unit = "graph"  # what split messages count

    def __len__(self) -> int:
        return len(self.slices["y"]) - 1

    @property
    def y(self) -> torch.Tensor:
        return self.storage.y

    def node_counts(self) -> torch.Tensor:
        return self.slices["x"].diff()

    def edge_counts(self) -> torch.Tensor:
        """Directed edges per graph (an undirected edge counts twice, as stored)."""
        return self.slices["edge_index"].diff()

    def dataset(self) -> CollatedGraphs:
        """One dataset per collection: PyG keeps each graph it cuts out, so validation in every
        epoch reads the graphs cut out before instead of cutting them again."""
        return self._collated

    @cached_property
    def _collated(self) -> CollatedGraphs:
        return CollatedGraphs(self.storage, self.slices)

    def graph(self, index: int) -> Data:
        return self.dataset()[index]


def collect(graphs: list[Data], class_names: list[str], **details) -> GraphCollection:
    """A collection of graphs that each carry `x`, `edge_index`, `y` (shape [1]) and
    optionally `edge_attr`; `details` fill the other fields."""
    storage, slices = InMemoryDataset.collate(graphs)
    return GraphCollection(storage, slices, class_names, **details)


def save_cached(collection: GraphCollection, path: Path, key: str) -> None:
    """Write atomically (a partial file never has the final name); plain tensors and text
    only, so loading needs no unpickling of code."""
    path.parent.mkdir(parents=True, exist_ok=True)
    content = {
        "format": CACHE_FORMAT,
        "key": key,
        "storage": {name: value for name, value in collection.storage.items()},
        "slices": dict(collection.slices),
        "class_names": list(collection.class_names),
        "scaffolds": list(collection.scaffolds or []),
        "skipped": list(collection.skipped),
        "feature_names": list(collection.feature_names),
    }
    handle, temporary = tempfile.mkstemp(dir=path.parent, prefix=path.name, suffix=".part")
    os.close(handle)
    try:
        torch.save(content, temporary)
        os.replace(temporary, path)
    finally:
        Path(temporary).unlink(missing_ok=True)


def load_cached(path: Path, key: str) -> GraphCollection | None:
    """The cached collection, or None when absent, unreadable or made for another key (a
    damaged file is named in a warning and then rebuilt by the caller)."""
    if not path.is_file():
        return None
    try:
        content = torch.load(path, weights_only=True)
        if content.get("format") != CACHE_FORMAT or content.get("key") != key:
            raise ValueError("made for other content")
        storage = Data(**content["storage"])
        slices = content["slices"]
        if len(slices["y"]) - 1 != len(storage.y) or int(slices["x"][-1]) != storage.num_nodes:
            raise ValueError("graph slices do not match the stored tensors")
    except Exception as error:  # any damage means: rebuild, never believe the file
        warnings.warn(f"{path}: cached graphs not used ({error}); parsing again", stacklevel=2)
        return None
    return GraphCollection(
        storage,
        slices,
        content["class_names"],
        scaffolds=tuple(content["scaffolds"]) or None,
        skipped=tuple(content["skipped"]),
        feature_names=tuple(content["feature_names"]),
    )


def from_flat(
    x: torch.Tensor,
    edge_index: torch.Tensor,
    y: torch.Tensor,
    node_graph: torch.Tensor,
    class_names: list[str],
    edge_attr: torch.Tensor | None = None,
    **details,
) -> GraphCollection:
    """A collection from one big graph whose nodes are grouped by graph (`node_graph` sorted)
    and whose edges, numbered globally, each join two nodes of one graph: the edges are put in
    graph order and numbered locally, as PyG's collate keeps them."""
    graphs = len(y)
    node_slices = torch.zeros(graphs + 1, dtype=torch.long)
    node_slices[1:] = torch.bincount(node_graph, minlength=graphs).cumsum(0)
    edge_graph = node_graph[edge_index[0]]
    order = torch.argsort(edge_graph, stable=True)
    edge_index, edge_graph = edge_index[:, order], edge_graph[order]
    edge_slices = torch.zeros(graphs + 1, dtype=torch.long)
    edge_slices[1:] = torch.bincount(edge_graph, minlength=graphs).cumsum(0)
    storage = Data(x=x, edge_index=edge_index - node_slices[edge_graph], y=y)
    slices = {"x": node_slices, "edge_index": edge_slices, "y": torch.arange(graphs + 1)}
    if edge_attr is not None:
        storage.edge_attr = edge_attr[order]
        slices["edge_attr"] = edge_slices
    return GraphCollection(storage, slices, class_names, **details)

"""Feature starts and hop edge sets for a collection of graphs.

A collection is one graph made of disconnected pieces, so every start that a node computes from
its own graph (degree, random-walk landing probabilities, random rows by node id) and every
k-hop edge set is the same whether computed piece by piece or on the whole: Heedful computes
them once on the whole (data/feature_starts.py), then cuts the result back into graphs.
"""

from __future__ import annotations

import dataclasses

import torch
from pydantic import BaseModel
from torch_geometric.data import Data

from harness.data.collection import GraphCollection, from_flat
from harness.data.feature_starts import contender_graph


def node_graph(collection: GraphCollection) -> torch.Tensor:
    """The graph of each node."""
    return torch.repeat_interleave(torch.arange(len(collection)), collection.node_counts())


def as_one_graph(collection: GraphCollection) -> Data:
    """The collection as one graph of disconnected pieces, edges numbered globally."""
    storage = collection.storage
    edge_graph = torch.repeat_interleave(torch.arange(len(collection)), collection.edge_counts())
    offsets = collection.slices["x"][:-1][edge_graph]
    return Data(x=storage.x, edge_index=storage.edge_index + offsets, num_nodes=storage.x.size(0))


def started_collection(
    collection: GraphCollection, options: BaseModel, seed: int, hop_cache: str
) -> tuple[GraphCollection, int]:
    """The collection a contender sees, and its feature width."""
    whole = as_one_graph(collection)
    started = contender_graph(whole, options, seed, hop_cache)
    if started.data.edge_index is whole.edge_index:  # no hop edge set: keep the edges as stored
        storage = collection.storage.clone()
        storage.x = started.data.x
        return dataclasses.replace(collection, storage=storage), started.width
    edge_attr = None  # a hop edge set joins nodes no bond or edge row describes
    rebuilt = from_flat(
        started.data.x,
        started.data.edge_index,
        collection.y,
        node_graph(collection),
        collection.class_names,
        edge_attr,
    )
    return dataclasses.replace(rebuilt, **_details(collection)), started.width


def _details(collection: GraphCollection) -> dict:
    kept = ("split_part", "scaffolds", "skipped", "split_origin", "feature_names")
    return {name: getattr(collection, name) for name in kept}

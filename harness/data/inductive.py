"""Inductive setting: train on the training nodes alone, then let held-out nodes arrive.

Training graph: the subgraph induced by the training nodes. Validation and test nodes and every
edge that touches them are absent, so neither their features nor their links reach the training
forward pass. Evaluation uses the full graph with the trained weights, without retraining.

New-node arrival: starting from the training graph, the held-out nodes join in batches. An
L-layer message-passing model's output at node v depends only on v's L-hop in-neighbourhood, so
after a batch arrives only the nodes within L hops downstream of a new node can change; they
are recomputed on their own L-hop neighbourhood and compared with a full recompute of every
present node. Under symmetric degree normalisation (GCN: weights 1/sqrt(d_i d_j)) a new edge
changes its endpoints' degrees and so the weights of their other edges, and the degrees of the
outermost nodes depend on their own edges: both reach one hop further, L + 1.
"""

from __future__ import annotations

import time
from dataclasses import asdict, dataclass

import numpy as np
import torch
from torch import nn
from torch_geometric.data import Data
from torch_geometric.utils import k_hop_subgraph, subgraph

from harness.data.splits import Split


def training_subgraph(data: Data, split: Split) -> Data:
    """The graph of the training nodes only, relabelled 0..n_train-1 in `split.train` order.

    `train_rows` are the rows of the training nodes in it (all of them); `original` maps each
    row back to its node in the full graph.
    """
    attributes = getattr(data, "edge_attr", None)
    edges, kept = subgraph(
        split.train, data.edge_index, attributes, relabel_nodes=True, num_nodes=data.num_nodes
    )
    graph = Data(x=data.x[split.train], edge_index=edges, y=data.y[split.train])
    if attributes is not None:
        graph.edge_attr = kept
    graph.num_nodes = len(split.train)
    graph.train_rows = torch.arange(len(split.train))
    graph.original = split.train.clone()
    return graph


@dataclass(frozen=True)
class ArrivalReport:
    """What the arrival measurement found; stored in a run's extras as `arrival`.

    Times per new node: all time spent keeping outputs current (the partial update, or the full
    recompute after every batch) divided by the number of nodes that arrived.
    """

    new_nodes: int
    batches: int
    radius: int
    update_seconds_per_new_node: float
    full_seconds_per_new_node: float
    max_difference: float

    def as_dict(self) -> dict:
        return asdict(self)


def present_graph(edge_index: torch.Tensor, present: torch.Tensor) -> torch.Tensor:
    """Edges whose two endpoints are present (ids unchanged)."""
    return edge_index[:, present[edge_index[0]] & present[edge_index[1]]]


def update_outputs(
    model: nn.Module,
    x: torch.Tensor,
    edges: torch.Tensor,
    new: torch.Tensor,
    radius: int,
    outputs: torch.Tensor,
) -> None:
    """Recompute `outputs` of the nodes within `radius` hops downstream of the `new` nodes."""
    nodes = x.size(0)
    affected, _, _, _ = k_hop_subgraph(new, radius, edges, num_nodes=nodes, flow="target_to_source")
    # the affected outputs need inputs within `radius` hops of them (see the module docstring)
    inputs, local_edges, positions, _ = k_hop_subgraph(
        affected, radius, edges, relabel_nodes=True, num_nodes=nodes
    )
    outputs[affected] = model(x[inputs], local_edges)[positions]


def full_outputs(
    model: nn.Module, x: torch.Tensor, edges: torch.Tensor, present: torch.Tensor
) -> tuple[torch.Tensor, torch.Tensor, float]:
    """Outputs of every present node from scratch, and the time the model took."""
    kept = torch.nonzero(present).flatten()
    local_edges, _ = subgraph(kept, edges, relabel_nodes=True, num_nodes=x.size(0))
    started = time.perf_counter()
    result = model(x[kept], local_edges)
    return kept, result, time.perf_counter() - started


@torch.no_grad()
def measure_arrival(
    model: nn.Module,
    data: Data,
    split: Split,
    radius: int,
    batches: int = 10,
    seed: int = 0,
) -> ArrivalReport:
    """Add validation and test nodes in `batches` seeded batches to the training graph; after
    each, update only the outputs within `radius` hops of the new nodes (L, or L + 1 under
    degree normalisation) and compare with a full recompute."""
    model.eval()
    x, edge_index = data.x, data.edge_index
    arriving = np.concatenate([split.validation.numpy(), split.test.numpy()])
    arriving = np.random.default_rng(seed).permutation(arriving)
    present = torch.zeros(data.num_nodes, dtype=torch.bool)
    present[split.train] = True
    kept, first, _ = full_outputs(model, x, present_graph(edge_index, present), present)
    outputs = torch.zeros(data.num_nodes, first.size(1), dtype=first.dtype)
    outputs[kept] = first
    update_seconds = full_seconds = difference = 0.0
    for batch in np.array_split(arriving, min(batches, len(arriving))):
        new = torch.from_numpy(batch)
        present[new] = True
        edges = present_graph(edge_index, present)  # the grown graph: shared by both paths
        started = time.perf_counter()
        update_outputs(model, x, edges, new, radius, outputs)
        update_seconds += time.perf_counter() - started
        kept, recomputed, seconds = full_outputs(model, x, edges, present)
        full_seconds += seconds
        difference = max(difference, float((outputs[kept] - recomputed).abs().max()))
    new_nodes = max(len(arriving), 1)
    return ArrivalReport(
        new_nodes=len(arriving),
        batches=min(batches, len(arriving)),
        radius=radius,
        update_seconds_per_new_node=update_seconds / new_nodes,
        full_seconds_per_new_node=full_seconds / new_nodes,
        max_difference=difference,
    )

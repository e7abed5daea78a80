"""Neighbour-sampled mini-batches (Hamilton et al., 2017) through PyG's loader interface.

Each step trains on a batch of target nodes and, layer by layer outwards, at most `fanout[l]`
in-neighbours of each node reached so far, drawn uniformly without replacement (every
neighbour when the fan-out is "all", written -1 here). The batch is PyG's directional
subgraph: the edges from each sampled neighbour to the node that drew it, nodes numbered
targets first, then in order of first appearance (PyG's `SamplerOutput` convention), so an
L-layer model's output at the targets needs nothing outside the batch.

PyG's own `NeighborSampler` needs pyg-lib or torch-sparse; when neither imports, Heedful's
`UniformNeighbourSampler` below (plain torch, vectorised, no loop over nodes) takes its place
behind the same `BaseSampler` interface, and PyG's `NodeLoader` drives both. The two draw
different batches from the same seed, so the sampler's name is part of a run's key.
"""

from __future__ import annotations

from typing import Any

import torch
from torch_geometric.data import Data
from torch_geometric.loader import NodeLoader
from torch_geometric.sampler import BaseSampler, NodeSamplerInput, SamplerOutput

from harness.planning.run_choices import PYG_SAMPLER, sampler_in_use

ALL_NEIGHBOURS = -1


def fanout_counts(fanout: list[int] | str, layers: int) -> list[int]:
    """Per-layer neighbour counts, ordered from the targets outwards (-1: every neighbour).

    The suite lists the fan-out first layer first; the first layer is the one farthest from
    the targets, so the sampler's first hop uses the last entry.
    """
    if fanout == "all":
        return [ALL_NEIGHBOURS] * layers
    return list(reversed(fanout))


def segment_positions(starts: torch.Tensor, lengths: torch.Tensor) -> torch.Tensor:
    """Concatenated ranges start_i, ..., start_i + length_i - 1 without a Python loop."""
    total = int(lengths.sum())
    offsets = torch.cumsum(lengths, 0) - lengths
    within = torch.arange(total) - torch.repeat_interleave(offsets, lengths)
    return torch.repeat_interleave(starts, lengths) + within


class UniformNeighbourSampler(BaseSampler):
    """Uniform neighbour sampling without replacement in plain torch.

    In-edges are held target-sorted (CSC). For a frontier of nodes, every candidate edge gets
    a uniform random key; within each node's edges the `count` smallest keys win, which is a
    uniform draw of `count` edges without replacement (a random permutation, truncated).
    """

    def __init__(self, edge_index: torch.Tensor, nodes: int, fanout: list[int], seed: int):
        source, target = edge_index
        order = torch.argsort(target, stable=True)
        self.sources = source[order]
        self.edge_ids = order
        self.pointer = torch.zeros(nodes + 1, dtype=torch.long)
        self.pointer[1:] = torch.cumsum(torch.bincount(target, minlength=nodes), 0)
        self.fanout = fanout
        self.generator = torch.Generator().manual_seed(seed)

    def pick(self, frontier: torch.Tensor, count: int) -> tuple[torch.Tensor, torch.Tensor]:
        """CSC positions of the edges drawn into `frontier`, and which frontier entry drew each."""
        starts = self.pointer[frontier]
        degrees = self.pointer[frontier + 1] - starts
        positions = segment_positions(starts, degrees)
        owner = torch.repeat_interleave(torch.arange(len(frontier)), degrees)
        if count == ALL_NEIGHBOURS or not bool((degrees > count).any()):
            return positions, owner
        keys = torch.rand(len(positions), dtype=torch.float64, generator=self.generator)
        order = torch.argsort(owner.double() + keys)  # by owner, then by random key
        rank = torch.arange(len(positions)) - torch.repeat_interleave(
            torch.cumsum(degrees, 0) - degrees, degrees
        )
        keep = order[rank < count]  # the first `count` of each owner's shuffled edges
        return positions[keep], owner[keep]

    def sample_from_nodes(self, index: NodeSamplerInput, **kwargs: Any) -> SamplerOutput:
        known = index.node
        frontier_start, frontier_size = 0, len(known)
        rows, columns, edges = [], [], []
        sampled_nodes, sampled_edges = [len(known)], []
        for count in self.fanout:
            frontier = known[frontier_start : frontier_start + frontier_size]
            positions, owner = self.pick(frontier, count)
            neighbours = self.sources[positions]
            # local ids: known nodes keep theirs; new ones follow in order of first appearance
            pool = torch.cat([known, neighbours])
            unique, inverse = torch.unique(pool, return_inverse=True)
            first = torch.full((len(unique),), len(pool), dtype=torch.long)
            first = first.scatter_reduce(0, inverse, torch.arange(len(pool)), reduce="amin")
            fresh = first >= len(known)
            fresh_order = torch.argsort(first[fresh])
            local = first.clone()
            local[fresh.nonzero().flatten()[fresh_order]] = len(known) + torch.arange(
                int(fresh.sum())
            )
            rows.append(local[inverse[len(known) :]])
            columns.append(frontier_start + owner)
            edges.append(self.edge_ids[positions])
            frontier_start, frontier_size = len(known), int(fresh.sum())
            known = torch.cat([known, unique[fresh][fresh_order]])
            sampled_nodes.append(frontier_size)
            sampled_edges.append(len(positions))
        empty = torch.zeros(0, dtype=torch.long)
        return SamplerOutput(
            node=known,
            row=torch.cat(rows) if rows else empty,
            col=torch.cat(columns) if columns else empty,
            edge=torch.cat(edges) if edges else empty,
            num_sampled_nodes=sampled_nodes,
            num_sampled_edges=sampled_edges,
            metadata=(index.input_id, index.time),
        )

    def sample_from_edges(self, index: Any, neg_sampling: Any = None) -> SamplerOutput:
        # PyG's sampler interface asks for it; link suites refuse sampled batches in the schema,
        # so only a caller outside Heedful's pipeline could reach this
        raise NotImplementedError("Heedful samples around nodes only")


def make_sampler(graph: Data, fanout: list[int], seed: int) -> BaseSampler:
    """PyG's neighbour sampler where its compiled back end imports, else the torch one."""
    if sampler_in_use() == PYG_SAMPLER:  # pragma: no cover - pyg-lib cannot be installed here
        from torch_geometric.sampler import NeighborSampler

        torch.manual_seed(seed)
        return NeighborSampler(graph, num_neighbors=fanout, subgraph_type="directional")
    return UniformNeighbourSampler(graph.edge_index, graph.num_nodes, fanout, seed)


def batch_loader(
    graph: Data, targets: torch.Tensor, fanout: list[int], batch_size: int, seed: int
) -> NodeLoader:
    """Shuffled batches of `targets` with their sampled neighbourhoods; the order of targets
    and the draws are fixed by `seed`. Batches hold `x`, `y`, `edge_index`, `n_id` (node ids
    in `graph`), `e_id` (edge ids), `batch_size` (the targets are the first rows) and, when the
    graph has them, the drawn edges' `edge_attr`."""
    plain = Data(x=graph.x, y=graph.y, edge_index=graph.edge_index, num_nodes=graph.num_nodes)
    if getattr(graph, "edge_attr", None) is not None:
        plain.edge_attr = graph.edge_attr
    return NodeLoader(
        plain,
        node_sampler=make_sampler(plain, fanout, seed),
        input_nodes=targets,
        batch_size=batch_size,
        shuffle=True,
        generator=torch.Generator().manual_seed(seed),
    )

"""Inductive edge splits for link prediction: held-out nodes with all their edges.

The seed draws a `split.validation` and a `split.test` share of the nodes; every edge touching
a test node is a test edge, every other edge touching a validation node a validation edge, and
the rest, among training nodes only, train and carry messages. Each held-out edge gets
`negatives_per_positive` negatives pairing its held-out end with a node it is not linked to in
the whole graph, drawn once per seed, the same for every contender. Scoring uses every node
with the trained weights; the scored edges stay out of the message-passing graph (validation:
training edges; test: plus the validation edges when the suite asks for it), since an edge
present in the graph it is scored over would leak its own answer.
"""

from __future__ import annotations

import torch
from pydantic import BaseModel
from torch_geometric.data import Data
from torch_geometric.utils import degree, is_undirected

from harness.data.assemble import node_name, too_few_non_edges
from harness.data.edge_splits import EdgeSplit, edge_split
from harness.errors import InputError

DRAWS = 50  # rounds of redrawing negatives that hit an edge before giving up


def held_out_negatives(
    held: torch.Tensor, edge_index: torch.Tensor, nodes: int, ratio: int, generator: torch.Generator
) -> torch.Tensor:
    """[2, len(held) * ratio] pairs (held node, another node not linked to it either way)."""
    source_of, target_of = edge_index
    linked = torch.cat([source_of * nodes + target_of, target_of * nodes + source_of])
    source = held.repeat_interleave(ratio)
    target = torch.randint(nodes, (len(source),), generator=generator)
    for _ in range(DRAWS):
        bad = (target == source) | torch.isin(source * nodes + target, linked)
        if not bad.any():
            return torch.stack([source, target])
        target[bad] = torch.randint(nodes, (int(bad.sum()),), generator=generator)
    raise InputError(too_few_non_edges(ratio, "the held-out nodes have", "held-out edge"))


def inductive_edge_split(
    data: Data, split: BaseModel, link: BaseModel, seed: int, tuning: bool = False
) -> EdgeSplit:
    """The inductive edge split of a link suite for this seed; `tuning` leaves out test pairs."""
    nodes = data.num_nodes
    undirected = is_undirected(data.edge_index, num_nodes=nodes)
    generator = torch.Generator().manual_seed(seed)
    order = torch.randperm(nodes, generator=generator)
    part = torch.zeros(nodes, dtype=torch.long)  # 0 train, 1 validation, 2 test
    validation_count, test_count = int(split.validation * nodes), int(split.test * nodes)
    part[order[:validation_count]] = 1
    part[order[validation_count : validation_count + test_count]] = 2
    edges = data.edge_index
    edge_part = torch.maximum(part[edges[0]], part[edges[1]])
    listed = edges[0] < edges[1] if undirected else torch.ones(edges.size(1), dtype=torch.bool)
    for code, name in ((1, "validation"), (2, "test")):
        if not bool((edge_part[listed] == code).any()):
            raise InputError(
                f"split.{name}: a {getattr(split, name):g} share of {nodes} nodes holds out no "
                "edge; allowed: a larger share or a graph with more edges"
            )
    train_graph = edges[:, edge_part == 0]
    had_edges = degree(edges[0], nodes) + degree(edges[1], nodes) > 0
    kept = degree(train_graph[0], nodes) + degree(train_graph[1], nodes) > 0
    stranded = torch.nonzero((part == 0) & had_edges & ~kept).flatten()
    if len(stranded):
        raise InputError(
            f"split.train: {len(stranded)} training nodes (first: "
            f"{node_name(data, int(stranded[0]))}) keep "
            "no edge once the held-out nodes are removed; allowed: larger train share or a "
            "denser graph"
        )
    scored = {}
    for code in (1, 2):
        positive = edges[:, (edge_part == code) & listed]
        # the held-out end of each edge goes first, so its negatives pair that node
        swap = part[positive[0]] != code
        positive = torch.where(swap, positive.flip(0), positive)
        negative = held_out_negatives(
            positive[0], edges, nodes, link.negatives_per_positive, generator
        )
        labels = torch.cat([torch.ones(positive.size(1)), torch.zeros(negative.size(1))])
        scored[code] = (torch.cat([positive, negative], dim=1), labels)
    test_graph = edges[:, edge_part <= 1] if link.validation_edges_at_test else train_graph
    test_pairs, test_labels = scored[2]
    return EdgeSplit(
        train_graph=train_graph,
        train_positive=train_graph[:, listed[edge_part == 0]],
        validation_pairs=scored[1][0],
        validation_labels=scored[1][1],
        test_graph=test_graph,
        test_pairs=test_pairs[:, :0] if tuning else test_pairs,
        test_labels=test_labels[:0] if tuning else test_labels,
        undirected=undirected,
        train_nodes=torch.nonzero(part == 0).flatten(),
    )


# the edge split of each suite setting
EDGE_SPLITS = {"transductive": edge_split, "inductive": inductive_edge_split}

"""Seeded edge splits for link prediction, without leakage (PyG's RandomLinkSplit).

The seed fixes which edges are held out and which non-edges are their negatives, so every
contender scores the same pairs. An undirected edge is held out with both its directions.
Training passes messages over the training edges only; validation is scored on that graph,
and test on it too (plus the validation edges when the suite asks for it). Negatives of
validation and test are non-edges of the whole graph, drawn once per seed.
"""

from __future__ import annotations

import random
import threading
import warnings
from dataclasses import dataclass
from typing import Any

import torch
import torch_geometric.utils._negative_sampling as pyg_negative_sampling
from pydantic import BaseModel
from torch_geometric.data import Data
from torch_geometric.transforms import RandomLinkSplit
from torch_geometric.utils import is_undirected

from harness.data.assemble import too_few_non_edges
from harness.errors import InputError


class ThreadRandom(threading.local):
    """Python's `random` as PyG's negative sampling sees it: one generator per thread, so that
    no other thread (a Dask worker's own) draws between a run's seed and its negatives. Seeded
    like `random.seed`, it draws the same numbers."""

    def __init__(self) -> None:
        self.generator = random.Random()

    def __getattr__(self, name: str) -> Any:
        return getattr(self.generator, name)


NEGATIVES_RANDOM = ThreadRandom()
pyg_negative_sampling.random = NEGATIVES_RANDOM  # PyG draws with `random.sample` from there


@dataclass(frozen=True)
class EdgeSplit:
    """Message-passing graphs and scored pairs of one seed.

    `train_positive` lists each training edge once (one direction of an undirected pair);
    `*_pairs` are [2, n] node pairs with `*_labels` 1 for an edge and 0 for a negative.
    `train_nodes` (inductive splits) are the nodes training negatives are drawn among.
    """

    train_graph: torch.Tensor
    train_positive: torch.Tensor
    validation_pairs: torch.Tensor
    validation_labels: torch.Tensor
    test_graph: torch.Tensor
    test_pairs: torch.Tensor
    test_labels: torch.Tensor
    undirected: bool
    train_nodes: torch.Tensor | None = None  # inductive: training pairs only among these


def edge_split(
    data: Data, split: BaseModel, link: BaseModel, seed: int, tuning: bool = False
) -> EdgeSplit:
    """The edge split of a link suite for this seed; `tuning` leaves out the test pairs."""
    undirected = is_undirected(data.edge_index, num_nodes=data.num_nodes)
    pairs = data.edge_index.size(1) // (2 if undirected else 1)
    for part in ("validation", "test"):
        if int(getattr(split, part) * pairs) < 1:
            raise InputError(
                f"split.{part}: a {getattr(split, part):g} share of {pairs} edges holds no edge; "
                "allowed: a graph with more edges or a larger share"
            )
    if pairs - int(split.validation * pairs) - int(split.test * pairs) < 1:
        raise InputError(
            f"split.train: {pairs} edges leave none for training; allowed: a larger train share"
        )
    splitter = RandomLinkSplit(
        num_val=split.validation,
        num_test=split.test,
        is_undirected=undirected,
        add_negative_train_samples=False,
        neg_sampling_ratio=float(link.negatives_per_positive),
    )
    plain = Data(edge_index=data.edge_index, num_nodes=data.num_nodes)
    state = NEGATIVES_RANDOM.getstate()  # a run's own draws go on after its split
    try:
        NEGATIVES_RANDOM.seed(seed)
        with torch.random.fork_rng(), warnings.catch_warnings():
            warnings.simplefilter("ignore")  # too few non-edges: the shortfall is checked below
            torch.manual_seed(seed)
            train, validation, test = splitter(plain)
    finally:
        NEGATIVES_RANDOM.setstate(state)
    for part, scored in (("validation", validation), ("test", test)):
        positives = int(scored.edge_label.sum())
        if int(len(scored.edge_label)) - positives < positives * link.negatives_per_positive:
            raise InputError(
                too_few_non_edges(link.negatives_per_positive, "the graph has", f"{part} edge")
            )
    test_graph = test.edge_index if link.validation_edges_at_test else train.edge_index
    empty = test.edge_label_index[:, :0]
    return EdgeSplit(
        train_graph=train.edge_index,
        train_positive=train.edge_label_index,
        validation_pairs=validation.edge_label_index,
        validation_labels=validation.edge_label,
        test_graph=test_graph,
        test_pairs=empty if tuning else test.edge_label_index,
        test_labels=test.edge_label[:0] if tuning else test.edge_label,
        undirected=undirected,
    )

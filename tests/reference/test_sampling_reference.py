"""Neighbour sampling checked against outside references.

Sources:
- Uniform sampling of k of d items without replacement includes each item with probability
  k / d (the hypergeometric distribution with one marked item; Feller, An Introduction to
  Probability Theory, vol. 1, 3rd ed., section II.6). Observed inclusion counts over many
  draws are compared with draws * k / d by Pearson's chi-square test, scipy.stats.chisquare.
- Hamilton, Ying and Leskovec (2017), "Inductive Representation Learning on Large Graphs",
  algorithm 2: with every neighbour kept at every layer, a mini-batch holding every target
  node computes the same outputs, hence the same loss and gradients, as the full-batch pass.
  The full-batch pass is PyG's own layers on the whole graph.
"""

from __future__ import annotations

import pytest
import torch
from scipy.stats import chisquare
from torch import nn
from torch_geometric.data import Data
from torch_geometric.sampler import NodeSamplerInput
from torch_geometric.utils import erdos_renyi_graph, to_undirected

from harness.data.hops import build_hop_edges
from harness.models import build_model
from harness.schema.contenders import (
    AttentionOptions,
    ConvolutionOptions,
    MLPOptions,
    NeighbourMeanOptions,
)
from harness.schema.training import Training
from harness.training.feeding import SampledFeed
from harness.training.sampling import UniformNeighbourSampler

DRAWS = 3000


def star_edges() -> tuple[torch.Tensor, dict[int, list[int]]]:
    """Node 0 has 12 in-neighbours, node 13 has 7, node 21 has 3 (fewer than the fan-out)."""
    neighbours = {0: list(range(1, 13)), 13: list(range(14, 21)), 21: [22, 23, 24]}
    pairs = [(j, i) for i, sources in neighbours.items() for j in sources]
    return torch.tensor(pairs).t().contiguous(), neighbours


def test_inclusion_frequency_matches_fanout_over_degree():
    """chi-square of per-neighbour inclusion counts against DRAWS * k / d (scipy.stats)."""
    edges, neighbours = star_edges()
    fanout = 4
    sampler = UniformNeighbourSampler(edges, 25, [fanout], seed=7)
    seeds = torch.tensor(list(neighbours))
    counts = torch.zeros(25)
    for _ in range(DRAWS):
        out = sampler.sample_from_nodes(NodeSamplerInput(None, seeds))
        source, target = out.node[out.row], out.node[out.col]
        for node in neighbours:  # without replacement: min(k, d) distinct neighbours each time
            drawn = source[target == node]
            assert len(drawn) == len(drawn.unique()) == min(fanout, len(neighbours[node]))
        counts += torch.bincount(source, minlength=25)
    for sources in neighbours.values():
        observed = counts[sources].numpy()
        if len(sources) <= fanout:
            assert (observed == DRAWS).all()
            continue
        expected = [DRAWS * fanout / len(sources)] * len(sources)
        assert chisquare(observed, expected).pvalue > 0.001


def graph(seed: int = 0) -> Data:
    torch.manual_seed(seed)
    edge_index = to_undirected(erdos_renyi_graph(60, 0.08))
    return Data(
        x=torch.randn(60, 6), y=torch.randint(0, 3, (60,)), edge_index=edge_index, num_nodes=60
    )


CONTENDERS = {
    "gcn": ConvolutionOptions(model="gcn", dropout=0.0),
    "gat": AttentionOptions(model="gat", dropout=0.0, heads=2, hidden=4),
    "gat_two_hops": AttentionOptions(model="gat", dropout=0.0, heads=2, hidden=4, hop_radius=2),
    "sage": NeighbourMeanOptions(model="sage", dropout=0.0, layers=3),
    "mlp": MLPOptions(model="mlp", dropout=0.0),
}


def gradients(model: nn.Module) -> list[torch.Tensor]:
    return [p.grad.clone() for p in model.parameters()]


@pytest.mark.parametrize("name", sorted(CONTENDERS))
def test_all_neighbours_in_one_batch_give_full_batch_gradients(name):
    data = graph()
    options = CONTENDERS[name]
    if getattr(options, "hop_radius", 1) > 1:  # sample from the k-hop edge set
        data.edge_index = build_hop_edges(data.edge_index, 60, options.hop_radius)
    rows = torch.arange(0, 60, 2)
    torch.manual_seed(1)
    model = build_model(options, 6, 3)
    nn.functional.cross_entropy(model(data.x, data.edge_index)[rows], data.y[rows]).backward()
    full = gradients(model)
    model.zero_grad()
    training = Training(batching="sampled", batch_size=len(rows), fanout="all")
    steps = list(SampledFeed(model, data, rows, training, seed=3).steps())
    assert len(steps) == 1
    step = steps[0]
    logits = model(*step.inputs)[step.rows]
    nn.functional.cross_entropy(logits, step.labels).backward()
    for expected, sampled in zip(full, gradients(model), strict=True):
        torch.testing.assert_close(sampled, expected, atol=1e-5, rtol=0)

"""Neighbour-sampled batches: PyG's batch layout, seeded draws, fan-out per layer."""

from __future__ import annotations

import torch
from torch_geometric.data import Data
from torch_geometric.utils import erdos_renyi_graph, to_undirected

from harness.models import build_model
from harness.schema.contenders import MLPOptions
from harness.schema.training import Training
from harness.training.feeding import SampledFeed
from harness.training.sampling import batch_loader, fanout_counts, segment_positions


def graph() -> Data:
    torch.manual_seed(0)
    edges = to_undirected(erdos_renyi_graph(200, 0.05))
    return Data(x=torch.randn(200, 4), y=torch.arange(200), edge_index=edges, num_nodes=200)


def batches(seed: int, fanout: list[int]) -> list[Data]:
    return list(batch_loader(graph(), torch.arange(0, 200, 2), fanout, 32, seed))


def test_batches_are_directional_subgraphs_of_the_graph_with_targets_first():
    data = graph()
    seen = []
    for batch in batches(seed=5, fanout=[3, 2]):
        source, target = batch.n_id[batch.edge_index[0]], batch.n_id[batch.edge_index[1]]
        assert torch.equal(data.edge_index[:, batch.e_id], torch.stack([source, target]))
        assert torch.equal(batch.y, batch.n_id)  # node rows follow n_id
        assert len(batch.n_id.unique()) == batch.num_nodes
        targets = batch.n_id[: batch.batch_size]
        seen.append(targets)
        # first hop: at most 3 in-edges per target; second hop: at most 2 per first-hop node
        first = batch.edge_index[1] < batch.batch_size
        assert torch.bincount(batch.edge_index[1][first]).max() <= 3
        assert torch.bincount(batch.edge_index[1][~first]).max() <= 2
        assert batch.num_sampled_nodes[0] == batch.batch_size
        assert sum(batch.num_sampled_edges) == batch.edge_index.size(1)
    assert sorted(torch.cat(seen).tolist()) == list(range(0, 200, 2))  # every target once
    assert [len(t) for t in seen] == [32, 32, 32, 4]


def test_the_same_seed_draws_the_same_batches_and_another_seed_others():
    first, again, other = batches(1, [4, 4]), batches(1, [4, 4]), batches(2, [4, 4])
    assert all(torch.equal(a.e_id, b.e_id) for a, b in zip(first, again, strict=True))
    assert not all(torch.equal(a.n_id, b.n_id) for a, b in zip(first, other, strict=True))


def test_fanout_is_listed_first_layer_first_and_sampled_from_the_targets_outwards():
    assert fanout_counts([15, 10], 2) == [10, 15]
    assert fanout_counts("all", 3) == [-1, -1, -1]


def test_segment_positions_concatenate_ranges():
    starts, lengths = torch.tensor([5, 0, 9]), torch.tensor([2, 0, 3])
    assert segment_positions(starts, lengths).tolist() == [5, 6, 9, 10, 11]


def test_a_model_without_edges_gets_plain_node_batches():
    data = graph()
    model = build_model(MLPOptions(model="mlp"), 4, 3)
    training = Training(batching="sampled", batch_size=50, fanout=[5, 5])
    feed = SampledFeed(model, data, torch.arange(100), training, seed=0)
    steps = list(feed.steps())
    assert [step.x.size(0) for step in steps] == [50, 50]
    assert all(step.edge_index.size(1) == 0 for step in steps)
    extras = feed.extras()["batching"]
    assert extras["sampled_nodes_per_step"] == 50 and extras["sampled_edges_per_step"] == 0
    assert extras["sampler"] == "heedful_uniform" and extras["steps_per_epoch"] == 2

"""Feature starts: shapes, values and seeding of every start, and the graph a contender sees."""

from __future__ import annotations

import math
from pathlib import Path
from typing import get_args

import pytest
import torch
from torch_geometric.data import Data

from harness.data.feature_starts import (
    STARTS,
    check_feature_start,
    contender_graph,
    start_features,
)
from harness.errors import InputError
from harness.schema.contenders import AttentionOptions, ConvolutionOptions, FeatureStart


def star_graph() -> Data:
    """Node 0 joined to nodes 1..5, plus the edge 1-2; given features of width 3."""
    pairs = [(0, j) for j in range(1, 6)] + [(1, 2)]
    edges = torch.tensor(pairs + [(b, a) for a, b in pairs]).T
    return Data(x=torch.randn(6, 3), edge_index=edges, y=torch.tensor([0, 1, 1, 0, 0, 1]))


def options(start: str, **more) -> ConvolutionOptions:
    return ConvolutionOptions(model="gcn", feature_start=start, **more)


def test_given_keeps_features() -> None:
    data = star_graph()
    started = start_features(data, options("given"), 0)
    assert started.data.x is data.x and started.width == 3 and started.embedding_rows == 0


def test_identity_is_node_ids_for_an_embedding_table() -> None:
    started = start_features(star_graph(), options("identity", start_width=7), 0)
    assert started.data.x.tolist() == list(range(6))
    assert (started.width, started.embedding_rows) == (7, 6)


def test_degree_one_hot_is_capped() -> None:
    started = start_features(star_graph(), options("degree", degree_cap=2), 0)
    # degrees 5, 2, 2, 1, 1, 1 -> capped at 2
    assert started.data.x.argmax(1).tolist() == [2, 2, 2, 1, 1, 1]
    assert started.width == 3


def test_log_degree() -> None:
    x = start_features(star_graph(), options("log_degree"), 0).data.x
    assert x[:, 0].tolist() == pytest.approx(
        [math.log(6), math.log(3), math.log(3)] + [math.log(2)] * 3
    )


def test_random_is_fixed_per_seed() -> None:
    data = star_graph()
    first = start_features(data, options("random", start_width=4), 1).data.x
    again = start_features(data, options("random", start_width=4), 1).data.x
    other = start_features(data, options("random", start_width=4), 2).data.x
    assert first.shape == (6, 4) and torch.equal(first, again) and not torch.equal(first, other)


def test_random_rows_follow_node_ids_into_subgraphs() -> None:
    data = star_graph()
    full = start_features(data, options("random", start_width=4), 3).data.x
    part = Data(x=data.x[[1, 4]], edge_index=torch.tensor([[0], [1]]), num_nodes=2)
    part.original = torch.tensor([1, 4])
    assert torch.equal(
        start_features(part, options("random", start_width=4), 3).data.x, full[[1, 4]]
    )


def test_constant_and_given_plus_degree() -> None:
    data = star_graph()
    assert torch.equal(start_features(data, options("constant"), 0).data.x, torch.ones(6, 1))
    both = start_features(data, options("given_degree", degree_cap=5), 0)
    assert both.width == 3 + 6 and torch.equal(both.data.x[:, :3], data.x)


def test_positional_encodings_are_seeded() -> None:
    data = star_graph()
    laplacian = start_features(data, options("laplacian", start_width=3), 4).data.x
    assert laplacian.shape == (6, 3)
    assert torch.equal(
        laplacian, start_features(data, options("laplacian", start_width=3), 4).data.x
    )
    walk = start_features(data, options("random_walk", start_width=2), 0).data.x
    # one step never returns; node 3 steps to node 0, then back with probability 1 / 5
    assert walk[:, 0].tolist() == [0.0] * 6 and walk[3, 1].item() == pytest.approx(0.2)


def test_too_many_eigenvectors_is_an_error() -> None:
    check_feature_start(6, options("laplacian", start_width=4), "s.toml: contenders.c.start_width")
    with pytest.raises(InputError, match=r"given start_width = 5 .* at most nodes - 2 = 4"):
        check_feature_start(6, options("laplacian", start_width=5), "s.toml: x")


def test_contender_graph_swaps_in_hop_edges(tmp_path: Path) -> None:
    data = star_graph()
    wide = AttentionOptions(model="gat", hop_radius=2, feature_start="degree")
    seen = contender_graph(data, wide, 0, str(tmp_path))
    assert seen.data.edge_index.size(1) == 6 * 5  # every node within two hops of every other
    assert data.edge_index.size(1) == 12  # the source graph is untouched
    assert seen.data.x.size(1) == seen.width == 33
    near = contender_graph(data, AttentionOptions(model="gat"), 0, str(tmp_path))
    assert near.data is data


def test_the_start_registry_covers_the_schema() -> None:
    assert set(STARTS) == set(get_args(FeatureStart))


@pytest.mark.parametrize("start", sorted(STARTS))
def test_every_start_keeps_its_contract(start: str) -> None:
    """One row per node; floats of the width it reports (node ids for an embedding table);
    the same seed gives the same features, and other fields of the graph are kept."""
    graph = star_graph()
    chosen = options(start, start_width=3, degree_cap=4)
    first, again = start_features(graph, chosen, 7), start_features(graph, chosen, 7)
    x = first.data.x
    assert x.size(0) == graph.num_nodes and torch.equal(x, again.data.x)
    assert torch.equal(first.data.edge_index, graph.edge_index)
    assert torch.equal(first.data.y, graph.y)
    if first.embedding_rows:
        assert x.dtype == torch.int64 and first.embedding_rows == graph.num_nodes
    else:
        assert x.is_floating_point() and x.dim() == 2 and x.size(1) == first.width

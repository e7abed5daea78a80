"""Chunked layer-by-layer inference gives the full-batch logits of every contender kind."""

from __future__ import annotations

import pytest
import torch
from torch_geometric.utils import erdos_renyi_graph, to_undirected

from harness.data.hops import build_hop_edges
from harness.models import build_model
from harness.schema.contenders import (
    AttentionOptions,
    ConvolutionOptions,
    MLPOptions,
    NeighbourMeanOptions,
)
from harness.training.inference import chunked_logits

NODES = 150
CONTENDERS = {
    "gat": AttentionOptions(model="gat"),
    "gatv2_residual": AttentionOptions(model="gatv2", residual=True, attend_to_self=False),
    "dot_product": AttentionOptions(model="dot_product", heads=[2, 3], head_merge="concatenate"),
    "gat_two_hops": AttentionOptions(model="gat", hop_radius=2),
    "gcn": ConvolutionOptions(model="gcn", layers=3),
    "gcn_identity": ConvolutionOptions(model="gcn", feature_start="identity"),
    "sage": NeighbourMeanOptions(model="sage"),
    "mlp": MLPOptions(model="mlp"),
}


@pytest.mark.parametrize("name", sorted(CONTENDERS))
@pytest.mark.parametrize("chunk_nodes", [1, 23, 1000])
def test_chunked_inference_equals_full_batch_inference(name, chunk_nodes):
    torch.manual_seed(0)
    edges = to_undirected(erdos_renyi_graph(NODES, 0.04))
    options = CONTENDERS[name]
    if getattr(options, "hop_radius", 1) > 1:
        edges = build_hop_edges(edges, NODES, options.hop_radius)
    identity = options.feature_start == "identity"
    x = torch.arange(NODES) if identity else torch.randn(NODES, 7)
    model = build_model(options, 7, 4, NODES if identity else 0)
    model.eval()
    with torch.no_grad():
        full = model(x, edges)
    chunked = chunked_logits(model, x, edges, chunk_nodes=chunk_nodes)
    torch.testing.assert_close(chunked, full, atol=1e-5, rtol=0)


def test_chunked_inference_leaves_the_model_in_evaluation_mode_and_without_gradients():
    torch.manual_seed(0)
    edges = to_undirected(erdos_renyi_graph(40, 0.1))
    model = build_model(ConvolutionOptions(model="gcn"), 5, 2)
    logits = chunked_logits(model, torch.randn(40, 5), edges, chunk_nodes=8)
    assert not model.training and not logits.requires_grad and logits.shape == (40, 2)

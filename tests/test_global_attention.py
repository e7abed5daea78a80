"""Attention over all nodes: large graphs in one batch are refused with the linear-attention
alternative named, which (like sampled batches) then passes and trains."""

from __future__ import annotations

from pathlib import Path

import pytest
import torch

from harness.errors import InputError
from harness.models import build_model
from harness.planning import parse_suite
from harness.schema.contenders import GlobalAttentionOptions
from harness.training.inference import chunked_logits


def suite(nodes: int, **options: object) -> dict:
    return {
        "name": "exchange",
        "data": {"source": "synthetic", "nodes": nodes, "average_degree": 4},
        "contenders": {"global": {"model": "global_attention", **options}},
    }


def test_full_attention_over_a_large_graph_names_performer(tmp_path: Path) -> None:
    with pytest.raises(InputError) as caught:
        parse_suite(suite(40_000), str(tmp_path / "suite.toml"))
    line = str(caught.value)
    assert "attends over all 40000 nodes" in line
    assert 'attention_kind = "performer"' in line and "\n" not in line
    parse_suite(suite(40_000, attention_kind="performer"), str(tmp_path / "suite.toml"))
    sampled = {"training": {"batching": "sampled", "fanout": [5, 5]}}
    parse_suite(suite(40_000, **sampled), str(tmp_path / "suite.toml"))
    parse_suite(suite(20_000), str(tmp_path / "suite.toml"))


def test_hidden_width_must_split_over_heads() -> None:
    with pytest.raises(ValueError, match="does not split over heads"):
        GlobalAttentionOptions(model="global_attention", hidden=10, heads=4)


def test_performer_layers_learn_and_infer_on_the_whole_graph() -> None:
    torch.manual_seed(0)
    options = GlobalAttentionOptions(model="global_attention", hidden=8, attention_kind="performer")
    network = build_model(options, 3, 2)
    x, edges = torch.randn(30, 3), torch.randint(0, 30, (2, 90))
    labels = (x[:, 0] > 0).long()
    optimiser = torch.optim.Adam(network.parameters(), lr=0.01)
    network.train()
    losses = []
    for _ in range(40):
        optimiser.zero_grad()
        loss = torch.nn.functional.cross_entropy(network(x, edges), labels)
        loss.backward()
        optimiser.step()
        losses.append(float(loss))
    assert losses[-1] < 0.5 * losses[0]
    network.eval()
    torch.manual_seed(1)  # the performer's random features are redrawn only in training
    with torch.no_grad():
        whole = network(x, edges)
    torch.testing.assert_close(chunked_logits(network, x, edges, chunk_nodes=7), whole)

"""The model-kind registry: one contract over every registered kind (its network, what it
declares for the memory estimate and the diagnostics), and a toy kind added through the
registry alone."""

from __future__ import annotations

from typing import Literal, get_args

import pytest
import torch
from activation_check import estimate_within_a_quarter_of_measured
from torch import nn
from torch_geometric.utils import scatter

from harness.execution.memory import GraphSize, message_edges, run_bytes, saved_bytes
from harness.models import build_model, unwrap
from harness.models.interface import AttentionNetwork, Network
from harness.models.stack import LayerStack, widths
from harness.planning.run_choices import resolve_compile
from harness.schema.contenders import ContenderBase
from harness.schema.data import SyntheticData
from harness.schema.model_kinds import MODEL_KINDS, ModelKind, SavedFloats, attends
from harness.schema.training import Training
from harness.training.diagnostics import attention_diagnostics, chunked_attention_diagnostics
from harness.training.inference import chunked_logits

IN_DIM, OUT_DIM, LAYERS = 3, 2, 2


def path_graph(nodes: int) -> torch.Tensor:
    """0 - 1 - 2 - ... - (nodes - 1), both directions."""
    forward = torch.stack([torch.arange(nodes - 1), torch.arange(1, nodes)])
    return torch.cat([forward, forward.flip(0)], dim=1)


def output_of_node_zero(model: nn.Module, x: torch.Tensor, edges: torch.Tensor) -> torch.Tensor:
    model.eval()
    with torch.no_grad():
        return model(x, edges)[0]


def with_leaf(x: torch.Tensor, edges: torch.Tensor, at: int) -> tuple[torch.Tensor, torch.Tensor]:
    """A new node hung on node `at` (so it lies `at` + 1 hops from node 0)."""
    new = x.size(0)
    grown = torch.cat([x, torch.ones(1, x.size(1))])
    link = torch.tensor([[at, new], [new, at]])
    return grown, torch.cat([edges, link], dim=1)


def keeps_the_contract(name: str) -> None:
    kind = MODEL_KINDS[name]
    assert name in get_args(kind.options.model_fields["model"].annotation)
    # automatic compiling: a positive edge-epoch count, or never (planning/run_choices.py)
    assert kind.compile_payback is None or kind.compile_payback > 0
    large = Training(compile="auto", epochs=1000)
    # 1M declared edges x 1000 epochs
    wanted = kind.compile_payback is not None and kind.compile_payback <= 1000 * 1_000_000
    edges = SyntheticData(source="synthetic", nodes=100_000, classes=3, average_degree=10)
    assert resolve_compile(large, name, edges).compile is wanted
    options = kind.options.model_validate({"model": name, "layers": LAYERS, "hidden": 4})
    torch.manual_seed(0)
    model = build_model(options, IN_DIM, OUT_DIM)
    x, edges = torch.randn(12, IN_DIM), path_graph(12)
    assert model(x, edges).shape == (12, OUT_DIM)
    network, _ = unwrap(model, x)
    # inference and sampled batches run every kind's network layer by layer
    assert isinstance(network, Network)
    torch.testing.assert_close(
        chunked_logits(model, x, edges, chunk_nodes=5), output_of_all(model, x, edges)
    )
    # the attention diagnostics read the weights of kinds that say they attend
    assert isinstance(network, AttentionNetwork) == kind.attends == attends(name)
    if kind.attends:
        labels = torch.arange(12) % OUT_DIM
        whole = attention_diagnostics(model, x, edges, labels)
        chunked = chunked_attention_diagnostics(model, x, edges, labels, chunk_nodes=5)
        assert len(whole["heads"]) == LAYERS * options.heads
        assert whole["mean"] == pytest.approx(chunked["mean"])
    # what the memory estimate is told: edges read at all, and one self-loop per node added
    assert network.uses_edges == kind.message_edges
    passed, _ = network.message_edges(edges, 12)
    assert int((passed[0] == passed[1]).sum()) == (12 if kind.self_loops else 0)
    # a node's output depends on nodes up to `radius` hops away and on none beyond (on every
    # node of its graph, for kinds that declare a global reach)
    radius = LAYERS + kind.extra_hops
    base = output_of_node_zero(model, x, edges)
    beyond = output_of_node_zero(model, *with_leaf(x, edges, at=radius))  # leaf radius + 1 away
    assert torch.allclose(base, beyond, atol=1e-6) != kind.global_reach
    if kind.message_edges:
        reached = output_of_node_zero(model, *with_leaf(x, edges, at=radius - 1))
        assert not torch.allclose(base, reached, atol=1e-6)


def output_of_all(model: nn.Module, x: torch.Tensor, edges: torch.Tensor) -> torch.Tensor:
    model.eval()
    with torch.no_grad():
        return model(x, edges)


@pytest.mark.parametrize("name", list(MODEL_KINDS))
def test_every_kind_keeps_its_contract(name: str) -> None:
    keeps_the_contract(name)


class ToyOptions(ContenderBase):
    """Layers that each add the neighbours' mean to a node's features, then map them linearly."""

    model: Literal["toy"]


class MeanAddLayer(nn.Module):
    """h_i' = W (h_i + mean_{j in N(i)} h_j) + b"""

    def __init__(self, in_dim: int, out_dim: int) -> None:
        super().__init__()
        self.linear = nn.Linear(in_dim, out_dim)

    def reset_parameters(self) -> None:
        self.linear.reset_parameters()

    def forward(self, x: torch.Tensor, edge_index: torch.Tensor) -> torch.Tensor:
        mean = scatter(x[edge_index[0]], edge_index[1], 0, x.size(0), reduce="mean")
        return self.linear(x + mean)


def build_toy(options: ToyOptions, in_dim: int, out_dim: int) -> nn.Module:
    layers = [
        MeanAddLayer(a, b) for a, b in widths(in_dim, options.hidden, out_dim, options.layers)
    ]
    return LayerStack(layers, options.activation, options.dropout, uses_edges=True)


# measured with ActivationMeter: a (hidden 64 -> 16) change of 1.73 MB on 3,000 nodes is about
# three floats per node and hidden unit, split here as one input and two outputs
TOY = ModelKind(ToyOptions, f"{__name__}:build_toy", SavedFloats(node_inputs=1, node_outputs=2))


def test_a_toy_kind_added_through_the_registry_alone(monkeypatch) -> None:
    monkeypatch.setitem(MODEL_KINDS, "toy", TOY)
    keeps_the_contract("toy")
    estimate_within_a_quarter_of_measured(ToyOptions(model="toy"))
    # the memory check of a suite reads the same entry: the graph's edges, no self-loops
    toy, size = ToyOptions(model="toy"), GraphSize(nodes=1000, edges=8000, features=16, classes=3)
    assert message_edges(toy, size) == 8000
    # by hand: 4 bytes x (16 + 2 x 64) and x (64 + 2 x 3) per node, 16 index bytes per edge
    expected = 1000 * 4 * (16 + 2 * 64 + 64 + 2 * 3) + 2 * 8000 * 16
    assert saved_bytes(toy, size, size.nodes, 8000) == expected
    assert run_bytes(toy, size, Training()) > expected

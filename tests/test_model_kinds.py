"""The model-kind registry: one contract over every registered kind, and a toy kind added
through the registry alone."""

from __future__ import annotations

from typing import Literal, get_args

import pytest
import torch
from torch import nn
from torch_geometric.utils import scatter

from harness.models import build_model
from harness.schema.contenders import ContenderBase
from harness.schema.model_kinds import MODEL_KINDS, ModelKind, attends

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
    options = kind.options.model_validate({"model": name, "layers": LAYERS, "hidden": 4})
    torch.manual_seed(0)
    model = build_model(options, IN_DIM, OUT_DIM)
    x, edges = torch.randn(12, IN_DIM), path_graph(12)
    assert model(x, edges).shape == (12, OUT_DIM)
    # the attention diagnostics read the weights of kinds that say they attend
    has_attention = any(
        "attention" in type(m).__name__.lower() or "GAT" in type(m).__name__
        for m in model.modules()
    )
    assert has_attention == kind.attends == attends(name)
    # a node's output depends on nodes up to `radius` hops away and on none beyond
    radius = LAYERS + kind.extra_hops
    base = output_of_node_zero(model, x, edges)
    beyond = output_of_node_zero(model, *with_leaf(x, edges, at=radius))  # leaf radius + 1 away
    assert torch.allclose(base, beyond, atol=1e-6)
    if getattr(model, "uses_edges", True):
        reached = output_of_node_zero(model, *with_leaf(x, edges, at=radius - 1))
        assert not torch.allclose(base, reached, atol=1e-6)


@pytest.mark.parametrize("name", list(MODEL_KINDS))
def test_every_kind_keeps_its_contract(name: str) -> None:
    keeps_the_contract(name)


class ToyOptions(ContenderBase):
    """`layers` rounds of adding the neighbours' mean, then one learned linear map."""

    model: Literal["toy"]


class ToyModel(nn.Module):
    def __init__(self, in_dim: int, out_dim: int, rounds: int) -> None:
        super().__init__()
        self.linear = nn.Linear(in_dim, out_dim)
        self.rounds = rounds

    def forward(self, x: torch.Tensor, edge_index: torch.Tensor) -> torch.Tensor:
        for _ in range(self.rounds):
            x = x + scatter(x[edge_index[0]], edge_index[1], 0, x.size(0), reduce="mean")
        return self.linear(x)


def build_toy(options: ToyOptions, in_dim: int, out_dim: int) -> nn.Module:
    return ToyModel(in_dim, out_dim, options.layers)


def test_a_toy_kind_added_through_the_registry_alone(monkeypatch) -> None:
    monkeypatch.setitem(MODEL_KINDS, "toy", ModelKind(ToyOptions, f"{__name__}:build_toy"))
    assert isinstance(build_model(ToyOptions(model="toy"), IN_DIM, OUT_DIM), ToyModel)
    keeps_the_contract("toy")

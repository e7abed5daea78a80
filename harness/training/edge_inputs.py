"""The edge attributes a run's model reads: checked once against the data, then passed along
with the edges (harness.training.feeding, inference and diagnostics)."""

from __future__ import annotations

import torch
from torch import nn
from torch_geometric.data import Data

from harness.errors import InputError
from harness.models import unwrap


def check_edge_inputs(data: Data, options: object, contender: str) -> None:
    """An error when the contender's layers need edge attributes and the graph has none (a kind
    that takes them optionally puts in its own constant); sources that declare their attributes
    were checked with the suite already (harness.schema.batching)."""
    use = options.edge_attribute_use()
    if use == "required" and getattr(data, "edge_attr", None) is None:
        raise InputError(
            f"contenders.{contender}: edge_features = true, but the data has no edge "
            "attributes; allowed: edge_feature_columns or edge_feature_prefix (tables), "
            "edge_types >= 2 (synthetic), or edge_features = false"
        )


def edge_width(data: Data) -> int:
    attributes = getattr(data, "edge_attr", None)
    return 0 if attributes is None else int(attributes.size(1))


def read_attributes(model: nn.Module, graph: Data) -> torch.Tensor | None:
    """The graph's edge attributes if the model reads them, else None."""
    stack, _ = unwrap(model, graph.x[:0])
    return getattr(graph, "edge_attr", None) if stack.edge_width else None


def named_attributes(attributes: torch.Tensor | None) -> dict:
    """Keyword arguments of a network call: `edge_attr` only when there are attributes, so
    every other call is the one it always was."""
    return {} if attributes is None else {"edge_attr": attributes}

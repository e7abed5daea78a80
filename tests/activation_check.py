"""The memory model's one check against measurement, shared by the memory tests and the model-
kind contract: a kind's declared saved floats against the activations autograd keeps."""

from __future__ import annotations

import torch
from pydantic import BaseModel

from harness.data.synthetic import contextual_sbm
from harness.execution.memory import GraphSize, message_edges, saved_bytes
from harness.models import build_model
from harness.schema.data import SyntheticData
from harness.training.resources import ActivationMeter


def estimate_within_a_quarter_of_measured(options: BaseModel) -> None:
    """One forward pass on a 3,000-node block model: the estimate within 25% of the bytes
    autograd's saved-tensor hooks see."""
    spec = SyntheticData(source="synthetic", nodes=3000, average_degree=10, feature_dimension=32)
    data = contextual_sbm(spec)
    size = GraphSize(data.num_nodes, data.edge_index.size(1), 32, spec.classes)
    model = build_model(options, 32, spec.classes)
    meter = ActivationMeter()
    with torch.autograd.graph.saved_tensors_hooks(meter.pack, meter.unpack):
        model(data.x, data.edge_index)
    estimate = saved_bytes(options, size, size.nodes, message_edges(options, size))
    assert 0.75 < estimate / meter.bytes < 1.25

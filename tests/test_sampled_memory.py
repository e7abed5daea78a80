"""A sampled step's tensor memory depends on the batch and fan-out, not on the graph."""

from __future__ import annotations

import torch
from torch import nn

from harness.data.synthetic import contextual_sbm
from harness.models import build_model
from harness.schema.contenders import AttentionOptions
from harness.schema.data import SyntheticData
from harness.schema.training import Training
from harness.training.feeding import SampledFeed
from harness.training.resources import ActivationMeter, tensor_bytes


def step_tensor_bytes(nodes: int) -> float:
    """Mean over five steps of batch inputs plus the activations autograd keeps (GAT 4x8)."""
    spec = SyntheticData(source="synthetic", nodes=nodes, average_degree=10, feature_dimension=16)
    data = contextual_sbm(spec)
    torch.manual_seed(0)
    model = build_model(AttentionOptions(model="gat", heads=4), 16, 4)
    training = Training(batching="sampled", batch_size=32, fanout=[4, 4])
    feed = SampledFeed(model, data, torch.arange(nodes // 2), training, seed=1)
    sizes = []
    for _, step in zip(range(5), feed.steps(), strict=False):
        meter = ActivationMeter()
        with torch.autograd.graph.saved_tensors_hooks(meter.pack, meter.unpack):
            logits = model(*step.inputs)[step.rows]
            nn.functional.cross_entropy(logits, step.labels)
        sizes.append(meter.bytes + tensor_bytes(*step.tensors()))
    return sum(sizes) / len(sizes)


def test_peak_tensor_memory_of_a_sampled_step_barely_grows_with_a_ten_times_larger_graph():
    small, large = step_tensor_bytes(8_000), step_tensor_bytes(80_000)
    assert large < 1.10 * small
    assert large > 0.9 * small  # the step is the same size, not empty

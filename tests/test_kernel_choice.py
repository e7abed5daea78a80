"""`[training] kernel`: which attention kernel a run uses, decided before its key is taken, and
the same network on either kernel (outputs and gradients within 1e-4 of PyG's scatter layers)."""

from __future__ import annotations

from dataclasses import replace

import pytest
import torch

from harness.data import load_graph
from harness.data.hops import build_hop_edges
from harness.errors import InputError
from harness.models import build_model
from harness.planning import expand, load_suite, parse_suite
from harness.planning.run_choices import SPARSE_MIN_EDGES, resolve_kernel, step_edges
from harness.schema.contenders import AttentionOptions, ConvolutionOptions
from harness.schema.data import SyntheticData
from harness.schema.training import Training
from harness.training.inference import chunked_logits
from harness.training.runs import perform

GRAPH = SyntheticData(source="synthetic", nodes=90, classes=3, average_degree=5, graph_seed=4)
LARGE = GRAPH.model_copy(update={"nodes": 100_000, "average_degree": 20})
GAT = AttentionOptions(model="gat")


def test_auto_is_sparse_for_attention_on_large_steps_only():
    auto = Training()
    assert resolve_kernel(auto, GAT, GRAPH).kernel == "scatter"
    assert resolve_kernel(auto, GAT, LARGE).kernel == "sparse"
    assert resolve_kernel(auto, ConvolutionOptions(model="gcn"), LARGE).kernel == "scatter"
    assert resolve_kernel(Training(kernel="sparse"), GAT, GRAPH).kernel == "sparse"
    assert resolve_kernel(Training(kernel="scatter"), GAT, LARGE).kernel == "scatter"


def test_sampled_batches_are_sparse_when_their_batches_are_large():
    big = Training(batching="sampled", fanout=[10, 10], batch_size=1024)
    # 1024 targets draw 10 each, then 1024 + 10,240 nodes draw 10 each
    assert step_edges(big, 2, LARGE) == 1024 * 10 + (1024 + 10_240) * 10 >= SPARSE_MIN_EDGES
    assert resolve_kernel(big, GAT, LARGE).kernel == "sparse"
    small = big.model_copy(update={"batch_size": 64})
    assert resolve_kernel(small, GAT, LARGE).kernel == "scatter"
    every = big.model_copy(update={"fanout": "all"})
    assert step_edges(every, 2, GRAPH) == GRAPH.declared_edges()  # at most the whole graph


def test_the_kernel_enters_the_key_only_when_sparse(tiny_suite):
    spec = next(s for s in expand(load_suite(tiny_suite)) if s.model == "gat")
    assert spec.training.kernel == "scatter"  # a small graph keeps its key
    keys = {
        kernel: replace(spec, training=spec.training.model_copy(update={"kernel": kernel})).key
        for kernel in ("auto", "scatter", "sparse")
    }
    assert keys["auto"] == keys["scatter"] == spec.key != keys["sparse"]


def test_sparse_for_a_kind_without_a_sparse_kernel_is_refused(tiny_suite_text):
    import tomllib

    raw = tomllib.loads(tiny_suite_text)
    raw["contenders"]["convolution"]["training"] = {"kernel": "sparse"}
    with pytest.raises(InputError) as caught:
        parse_suite(raw, "tiny.toml")
    assert str(caught.value) == (
        'tiny.toml: contenders.convolution.training.kernel: given "sparse" for convolution '
        '(model gcn); allowed: "sparse" only for dot_product, gat, gatv2; "auto" or "scatter" '
        "for any model"
    )


@pytest.mark.parametrize("model", ["gat", "gatv2", "dot_product"])
@pytest.mark.parametrize(("radius", "attend_to_self"), [(1, True), (2, False)])
def test_networks_on_either_kernel_agree(model, radius, attend_to_self):
    """Same initialisation, so the same weights; logits (all rows, some rows, chunked) and
    gradients within 1e-4."""
    data = load_graph(GRAPH)
    edges = build_hop_edges(data.edge_index, data.num_nodes, radius)
    options = AttentionOptions(
        model=model,
        heads=[2, 3],
        head_merge=["concatenate", "average"],
        hidden=4,
        hop_radius=radius,
        attend_to_self=attend_to_self,
        dropout=0.0,
        residual=True,
    )
    outputs = {}
    for kernel in ("scatter", "sparse"):
        torch.manual_seed(0)
        network = build_model(options, data.num_features, 3, kernel=kernel)
        logits = network(data.x, edges)
        logits.square().sum().backward()
        rows = torch.arange(0, data.num_nodes, 7)
        with torch.no_grad():
            some = network(data.x, edges, None, rows)
        chunked = chunked_logits(network, data.x, edges, chunk_nodes=20)
        grads = [p.grad for p in network.parameters()]
        outputs[kernel] = (logits.detach(), some, chunked, *grads)
    for ours, theirs in zip(outputs["sparse"], outputs["scatter"], strict=True):
        torch.testing.assert_close(ours, theirs, atol=1e-4, rtol=1e-4)


def test_a_run_on_the_sparse_kernel_records_it(tiny_suite):
    spec = next(s for s in expand(load_suite(tiny_suite)) if s.model == "gat" and s.seed == 0)
    sparse = replace(spec, training=spec.training.model_copy(update={"kernel": "sparse"}))
    on_sparse, on_scatter = perform(sparse), perform(spec)
    assert on_sparse.extras["kernel"] == "sparse" and "kernel" not in on_scatter.extras
    # the same training up to the order of floating-point sums
    assert abs(on_sparse.val_metric - on_scatter.val_metric) <= 0.02


def test_auto_compiles_a_sparse_run_only_where_compiling_pays_on_that_kernel():
    """GAT on the sparse kernel: the kernel does the edge-wise work itself, so compiling
    saves nothing worth its compile time (docs/performance.md); on scatter it compiles. The same
    for GATv2, whose edge-wise score vectors the sparse kernel forms in one C pass."""
    from harness.planning.run_choices import resolve_compile

    sparse = resolve_kernel(Training(), GAT, LARGE)
    assert resolve_compile(sparse, "gat", LARGE).compile is False
    scatter = resolve_kernel(Training(kernel="scatter"), GAT, LARGE)
    assert resolve_compile(scatter, "gat", LARGE).compile is True
    dynamic = AttentionOptions(model="gatv2")
    sparse = resolve_kernel(Training(), dynamic, LARGE)
    assert resolve_compile(sparse, "gatv2", LARGE).compile is False
    scatter = resolve_kernel(Training(kernel="scatter"), dynamic, LARGE)
    assert resolve_compile(scatter, "gatv2", LARGE).compile is True

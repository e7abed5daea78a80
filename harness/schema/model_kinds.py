"""The model-kind registry: every kind's options class, builder, and what the rest needs to know.

Adding a kind is one module in harness/models/ (its builder) and one line here. The builder is
named by its import path, so that validating a suite imports no torch; the models stage imports
it when a model is first built.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Annotated, Union

from pydantic import Field

from harness.schema.contenders import (
    AttentionOptions,
    ContenderBase,
    ConvolutionOptions,
    EdgeConvolutionOptions,
    GlobalAttentionOptions,
    IsomorphismOptions,
    MLPOptions,
    NeighbourMeanOptions,
    TransformerOptions,
)


@dataclass(frozen=True)
class SavedFloats:
    """Floats autograd saves for backward in one layer of a kind, for the memory estimate
    (harness.execution.memory): per node, `node_inputs` x the layer's input width plus
    `node_outputs` x heads x its output width per head; per message edge and head,
    `edge_outputs` x the output width per head plus `edge_scalars`. Measured with
    harness.training.resources.ActivationMeter (tests/test_memory.py)."""

    node_inputs: int
    node_outputs: int
    edge_outputs: int = 0
    edge_scalars: int = 0


@dataclass(frozen=True)
class ModelKind:
    """One model kind. `extra_hops`: hops beyond its layers' (times the hop radius) that a
    node's output depends on, e.g. through degree normalisation. `message_edges`: whether its
    layers read edges at all; `self_loops`: whether it adds one self-loop per node to them.
    A kind that `attends` builds a network with attention weights
    (harness.models.interface.AttentionNetwork), which the diagnostics read. `compile_payback`:
    directed edges x maximum epochs from which `compile = "auto"` compiles it (the one-off
    compile time is paid back; benchmarks/large_graphs.py, docs/performance.md); None: never.
    `layer`: for kinds sharing the attention builder, "module:function" of one layer,
    layer(options, in_width, out_width_per_head, heads, concatenate, edge_width) -> torch
    module (edge_width 0: no edge attributes).
    `sparse_kernel`: its layers can run on harness.models.sparse_layers (`kernel` in
    [training]); `sparse_compile_payback`: `compile_payback` for runs on that kernel.
    `global_reach`: its layers read every node of the graph, not hops."""

    options: type[ContenderBase]  # pydantic class with `model: Literal[<kind name>, ...]`
    builder: str  # "module:function", build(options, in_dim, out_dim) -> torch module
    saved: SavedFloats
    message_edges: bool = True
    self_loops: bool = False
    attends: bool = False
    extra_hops: int = 0
    compile_payback: float | None = None
    layer: str | None = None
    sparse_kernel: bool = False
    sparse_compile_payback: float | None = None
    global_reach: bool = False


ATTENTION = "harness.models.attention:build"
LAYERS = "harness.models.attention"
# static scores: a scalar score and its softmax per edge and head, and the weighted message
STATIC_SCORES = SavedFloats(node_inputs=2, node_outputs=3, edge_outputs=1, edge_scalars=3)
# dynamic and dot-product scores: a score vector per edge and head before it is reduced
VECTOR_SCORES = SavedFloats(node_inputs=2, node_outputs=3, edge_outputs=2, edge_scalars=6)

ATTENDING = {
    "self_loops": True,
    "attends": True,
    "compile_payback": 19e6,  # 9.4 epochs on 2M edges
    "sparse_kernel": True,
}

MODEL_KINDS: dict[str, ModelKind] = {
    "gat": ModelKind(
        AttentionOptions, ATTENTION, STATIC_SCORES, **ATTENDING, layer=f"{LAYERS}:static_layer"
    ),
    "gatv2": ModelKind(
        AttentionOptions,
        ATTENTION,
        VECTOR_SCORES,
        **ATTENDING,
        layer=f"{LAYERS}:dynamic_layer",
        # no sparse_compile_payback: on the sparse kernel its edge-wise steps are one C pass
        # that compiled code calls as it is, so compiling saves little (docs/performance.md)
    ),
    "dot_product": ModelKind(
        AttentionOptions,
        ATTENTION,
        VECTOR_SCORES,
        **ATTENDING,
        layer=f"{LAYERS}:dot_product_layer",
    ),
    # dot-product scores plus the skip W_r h_i and its gate per node; the sparse kernel has no
    # gate, and compiling it was not measured, so it never compiles automatically
    "transformer": ModelKind(
        TransformerOptions,
        ATTENTION,
        SavedFloats(node_inputs=2, node_outputs=7, edge_outputs=2, edge_scalars=6),
        self_loops=True,
        attends=True,
        layer=f"{LAYERS}:transformer_layer",
    ),
    # D^{-1/2} (A + I) D^{-1/2}: a neighbour's degree counts its own neighbours, one hop on;
    # one normalised weight per edge
    "gcn": ModelKind(
        ConvolutionOptions,
        "harness.models.convolution:build",
        SavedFloats(node_inputs=1, node_outputs=2, edge_scalars=1),
        self_loops=True,
        extra_hops=1,
        compile_payback=26e6,  # 13.2 epochs on 2M edges
    ),
    "sage": ModelKind(
        NeighbourMeanOptions,
        "harness.models.neighbour_mean:build",
        SavedFloats(node_inputs=2, node_outputs=2),
        compile_payback=35e6,  # 17.4 epochs on 2M edges
    ),
    # a sum over neighbours, then a two-layer MLP (measured: tests/activation_check.py)
    "gin": ModelKind(
        IsomorphismOptions,
        "harness.models.isomorphism:build",
        SavedFloats(node_inputs=2, node_outputs=2),
    ),
    # ReLU(h_j + W_e e_ji) per edge and the two-layer MLP per node (tests/test_memory.py)
    "gine": ModelKind(
        EdgeConvolutionOptions,
        "harness.models.edge_convolution:build",
        SavedFloats(node_inputs=2, node_outputs=5, edge_outputs=1),
        compile_payback=None,
    ),
    # the GINE part per edge and node and the attention's per node: torch's fused attention
    # keeps no score per node pair (measured); its time grows with nodes squared
    # (harness.schema.batching refuses large graphs). Compiling was not measured: never auto
    "global_attention": ModelKind(
        GlobalAttentionOptions,
        "harness.models.global_attention:build",
        SavedFloats(node_inputs=2, node_outputs=32, edge_outputs=1),
        global_reach=True,
    ),
    "mlp": ModelKind(
        MLPOptions,
        "harness.models.perceptron:build",
        SavedFloats(node_inputs=1, node_outputs=2),
        message_edges=False,
    ),
}


def attends(model: str) -> bool:
    """Whether a model kind has attention weights (False for kinds no longer registered)."""
    kind = MODEL_KINDS.get(model)
    return kind is not None and kind.attends


def attention_kinds() -> tuple[str, ...]:
    return tuple(name for name, kind in MODEL_KINDS.items() if kind.attends)


def options_union() -> object:
    """The contender options of every registered kind, told apart by their `model` field."""
    classes = tuple(dict.fromkeys(kind.options for kind in MODEL_KINDS.values()))
    return Annotated[Union[classes], Field(discriminator="model")]  # noqa: UP007


ContenderOptions = options_union()

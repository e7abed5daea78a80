"""Choices made for a run before its key is taken: whether it is compiled (`compile = "auto"`
decided from the declared graph size), which attention kernel it uses (`kernel = "auto"`, from
the edges of a training step) and which neighbour sampler this installation has."""

from __future__ import annotations

from pydantic import BaseModel

from harness.schema.data import DataSource
from harness.schema.model_kinds import MODEL_KINDS
from harness.schema.training import Training

TORCH_SAMPLER = "heedful_uniform"
PYG_SAMPLER = "pyg_neighbor"

# Automatic compiling pays back when the epochs times the per-epoch saving exceed the one-off
# compile time; the saving grows with the edges, so each model kind declares a count of
# edge-epochs (its registry entry's `compile_payback`). Kinds without one never compile
# automatically.
COMPILE_MIN_EDGES = 200_000  # below this, even a long run's saving is lost in noise


def resolve_compile(training: Training, model: str, data: DataSource) -> Training:
    """Training with `compile = "auto"` decided: true or false, before any key is taken.
    Sampled runs are never compiled (every batch has another shape)."""
    if training.sampled and training.compile is not False:
        return training.model_copy(update={"compile": False})
    if training.compile != "auto":
        return training
    edges = data.declared_edges()
    wanted = edges is not None and compile_pays_back(model, edges, training.epochs, training.kernel)
    return training.model_copy(update={"compile": wanted})


def compile_pays_back(model: str, edges: int, epochs: int, kernel: str = "scatter") -> bool:
    """Whether compiling a full-batch run of `model` on `edges` directed edges for `epochs`
    epochs saves more than the compile costs (the kind's measured `compile_payback`, or its
    `sparse_compile_payback` on the sparse kernel)."""
    kind = MODEL_KINDS.get(model)
    payback = None if kind is None else kind.compile_payback
    if kind is not None and kernel == "sparse":
        payback = kind.sparse_compile_payback
    return payback is not None and edges >= COMPILE_MIN_EDGES and edges * epochs >= payback


# Message edges per step from which "auto" takes the sparse kernel. Measured (one layer forward
# and backward, CSR sort included; benchmarks/kernel_threshold.py, docs/performance.md): it
# pays from a few thousand edges for every attention kind; this keeps every shipped suite (at
# most 12,000 edges) on scatter, with its keys.
SPARSE_MIN_EDGES = 50_000


def step_edges(training: Training, layers: int, data: DataSource) -> int | None:
    """Message edges of one training step, known before loading: the whole graph's, or a
    sampled batch's estimate (`batch_size` targets, each layer's fan-out capped by the average
    degree, at most the graph's edges); None when the data does not declare its edges."""
    edges = data.declared_edges()
    if edges is None or not training.sampled:
        return edges
    size = data.declared_size()
    degree = edges / size.nodes if size is not None and size.nodes else float(edges)
    fanout = training.fanout if isinstance(training.fanout, list) else [degree] * layers
    frontier, batch_edges = float(training.batch_size), 0.0
    for count in fanout:
        drawn = frontier * min(count, degree)
        batch_edges += drawn
        frontier += drawn
    return min(round(batch_edges), edges)


def resolve_kernel(training: Training, options: BaseModel, data: DataSource) -> Training:
    """Training with `kernel = "auto"` decided: "sparse" for kinds with a sparse kernel when a
    training step has at least SPARSE_MIN_EDGES message edges, else "scatter"."""
    kind = MODEL_KINDS.get(options.model)
    # the sparse kernel computes no edge-attribute terms
    if kind is None or not kind.sparse_kernel or options.edge_attribute_use() != "none":
        return training.model_copy(update={"kernel": "scatter"})
    if training.kernel != "auto":
        return training
    edges = step_edges(training, options.layers, data)
    wanted = edges is not None and edges >= SPARSE_MIN_EDGES
    return training.model_copy(update={"kernel": "sparse" if wanted else "scatter"})


def sampler_in_use() -> str:
    """The neighbour sampler of this installation: PyG's own needs pyg-lib or torch-sparse."""
    import torch_geometric.typing  # only sampled runs pay for importing torch here

    if torch_geometric.typing.WITH_PYG_LIB or torch_geometric.typing.WITH_TORCH_SPARSE:
        return PYG_SAMPLER
    return TORCH_SAMPLER

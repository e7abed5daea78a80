"""Choices made for a run before its key is taken: whether it is compiled (`compile = "auto"`
decided from the declared graph size) and which neighbour sampler this installation has."""

from __future__ import annotations

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
    wanted = edges is not None and compile_pays_back(model, edges, training.epochs)
    return training.model_copy(update={"compile": wanted})


def compile_pays_back(model: str, edges: int, epochs: int) -> bool:
    """Whether compiling a full-batch run of `model` on `edges` directed edges for `epochs`
    epochs saves more than the compile costs (the kind's measured `compile_payback`)."""
    kind = MODEL_KINDS.get(model)
    payback = None if kind is None else kind.compile_payback
    return payback is not None and edges >= COMPILE_MIN_EDGES and edges * epochs >= payback


def sampler_in_use() -> str:
    """The neighbour sampler of this installation: PyG's own needs pyg-lib or torch-sparse."""
    import torch_geometric.typing  # only sampled runs pay for importing torch here

    if torch_geometric.typing.WITH_PYG_LIB or torch_geometric.typing.WITH_TORCH_SPARSE:
        return PYG_SAMPLER
    return TORCH_SAMPLER

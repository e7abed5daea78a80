"""Choices made for a run before its key is taken: whether it is compiled (`compile = "auto"`
decided from the declared graph size) and which neighbour sampler this installation has."""

from __future__ import annotations

from pathlib import Path

from pydantic import BaseModel

from harness.schema.model_kinds import MODEL_KINDS
from harness.schema.training import Training

TORCH_SAMPLER = "heedful_uniform"
PYG_SAMPLER = "pyg_neighbor"

# Automatic compiling pays back when the epochs times the per-epoch saving exceed the one-off
# compile time; the saving grows with the edges, so each model kind declares a count of
# edge-epochs (its registry entry's `compile_payback`). Kinds without one never compile
# automatically.
COMPILE_MIN_EDGES = 200_000  # below this, even a long run's saving is lost in noise


def declared_edges(data: BaseModel) -> int | None:
    """Directed edges the data section will give, known before loading it; None if unknown.

    Synthetic graphs: nodes x average degree; tables: edge rows (twice if undirected); bundled
    graphs are small. PyG datasets are not counted without loading them.
    """
    if data.source == "synthetic":
        return round(data.nodes * data.average_degree)
    if data.source == "tables":
        return table_rows(data.edges) * (1 if data.directed else 2)
    if data.source in ("karate", "digits"):
        return 0
    return None


_ROWS: dict[tuple[str, int, int], int] = {}


def table_rows(path: str) -> int:
    """Data rows of a CSV (lines after the header) or Parquet file (from its footer)."""
    stat = Path(path).stat()
    cache_key = (path, stat.st_size, stat.st_mtime_ns)
    if cache_key not in _ROWS:
        if Path(path).suffix.lower() == ".csv":
            with open(path, "rb") as handle:
                lines = sum(block.count(b"\n") for block in iter(lambda: handle.read(1 << 20), b""))
            _ROWS[cache_key] = max(lines - 1, 0)
        else:
            import pyarrow.parquet  # only suites with Parquet tables need it

            _ROWS[cache_key] = pyarrow.parquet.ParquetFile(path).metadata.num_rows
    return _ROWS[cache_key]


def resolve_compile(training: Training, model: str, data: BaseModel) -> Training:
    """Training with `compile = "auto"` decided: true or false, before any key is taken.
    Sampled runs are never compiled (every batch has another shape)."""
    if training.sampled and training.compile is not False:
        return training.model_copy(update={"compile": False})
    if training.compile != "auto":
        return training
    edges = declared_edges(data)
    kind = MODEL_KINDS.get(model)
    payback = None if kind is None else kind.compile_payback
    wanted = (
        edges is not None
        and payback is not None
        and edges >= COMPILE_MIN_EDGES
        and edges * training.epochs >= payback
    )
    return training.model_copy(update={"compile": wanted})


def sampler_in_use() -> str:
    """The neighbour sampler of this installation: PyG's own needs pyg-lib or torch-sparse."""
    import torch_geometric.typing  # only sampled runs pay for importing torch here

    if torch_geometric.typing.WITH_PYG_LIB or torch_geometric.typing.WITH_TORCH_SPARSE:
        return PYG_SAMPLER
    return TORCH_SAMPLER

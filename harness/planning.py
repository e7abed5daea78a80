"""Suite file -> validated Suite -> list of runs (contender x point x seed)."""

from __future__ import annotations

import hashlib
import json
import tomllib
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

from pydantic import BaseModel, ValidationError

import harness
from harness.errors import InputError
from harness.schema.ablation import (
    DEFAULT_HOP_CACHE,
    design_points,
    hop_cache_directory,
    point_label,
)
from harness.schema.base import format_validation_error, key_dump
from harness.schema.batching import check_batching
from harness.schema.suite import Suite
from harness.schema.training import Training
from harness.schema.tuning import check_tuning

UNSAMPLED = {"batch_size", "fanout"}
TORCH_SAMPLER = "heedful_uniform"
PYG_SAMPLER = "pyg_neighbor"


@dataclass(frozen=True)
class RunSpec:
    """Everything that determines one run's result, plus where it belongs in the suite."""

    suite: str
    contender: str
    options: BaseModel
    training: Training
    data: BaseModel
    split: BaseModel
    metric: str
    seed: int
    setting: str = "transductive"
    point: dict[str, Any] = field(default_factory=dict)
    hop_cache: str = DEFAULT_HOP_CACHE  # where k-hop edge sets are cached; not in the key

    @property
    def model(self) -> str:
        return self.options.model

    @property
    def label(self) -> str:
        """The contender with its ablation point, e.g. `attention[heads=4,hop_radius=2]`."""
        return point_label(self.contender, self.point)

    @property
    def key(self) -> str:
        """Hash of what determines the result; the suite and contender names are labels only."""
        sampled = self.training.sampled
        determining = {
            "data": key_dump(self.data),
            "split": key_dump(self.split),
            "options": key_dump(self.options, exclude={"training"}),
            # batch size and fan-out mean nothing to a full-batch run
            "training": key_dump(self.training, exclude=set() if sampled else UNSAMPLED),
            "metric": self.metric,
            "setting": self.setting,
            "seed": self.seed,
            "version": harness.__version__,
        }
        if sampled:  # the two samplers draw different batches from one seed
            determining["sampler"] = sampler_in_use()
        text = json.dumps(determining, sort_keys=True, separators=(",", ":"))
        return hashlib.sha256(text.encode()).hexdigest()[:24]

    @property
    def stored_keys(self) -> frozenset[str]:
        """Keys under which this run may be stored: its own, and for a compiled run also the
        eager one, since a run whose compiling failed is stored as eager (see README)."""
        if self.training.compile is not True:
            return frozenset({self.key})
        eager = replace(self, training=self.training.model_copy(update={"compile": False}))
        return frozenset({self.key, eager.key})


# Automatic compiling pays back when the epochs times the per-epoch saving exceed the one-off
# compile time; the saving grows with the edges, so the rule is a count of edge-epochs per model
# kind (directed edges x maximum epochs), measured by benchmarks/large_graphs.py (README,
# Performance). Kinds that are not listed never compile automatically.
COMPILE_PAYBACK_EDGE_EPOCHS: dict[str, float] = {
    "gat": 10e6,
    "gatv2": 10e6,
    "dot_product": 10e6,
}
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
    payback = COMPILE_PAYBACK_EDGE_EPOCHS.get(model)
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


def read_suite_file(path: str | Path) -> dict:
    """Raw TOML of a suite file, with syntax errors reported by line and column."""
    path = Path(path)
    try:
        # a byte-order mark (some Windows editors write one) is not part of the TOML
        text = path.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise InputError(f"{path}: suite file not found") from None
    except (IsADirectoryError, PermissionError, UnicodeDecodeError) as error:
        raise InputError(f"{path}: cannot read suite file ({error.__class__.__name__})") from None
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as error:
        raise InputError(f"{path}: TOML syntax error: {error}") from None


def parse_suite(raw: dict, source: str) -> Suite:
    """Validate raw suite data; errors name the source and key path."""
    try:
        # data file paths in a suite are relative to the suite file's folder
        suite = Suite.model_validate(raw, context={"folder": str(Path(source).parent)})
    except ValidationError as error:
        raise InputError(format_validation_error(error, raw, source)) from None
    design_points(suite, source)  # ablation axes and levels, checked once here
    check_tuning(suite, source)  # search spaces against the contenders' options
    check_batching(suite, source)  # fan-out lengths against each contender's layers
    return suite


def load_suite(path: str | Path) -> Suite:
    """Read and validate a suite file."""
    return parse_suite(read_suite_file(path), str(path))


def expand(suite: Suite) -> list[RunSpec]:
    """All runs of a suite: every contender and ablation point on every seed (seeds paired)."""
    runs = []
    for design in design_points(suite):
        options = design.options
        training = resolve_compile(
            options.training.apply(suite.training), options.model, suite.data
        )
        for seed in suite.seed_list:
            runs.append(
                RunSpec(
                    suite=suite.name,
                    contender=design.contender,
                    options=options,
                    training=training,
                    data=suite.data,
                    split=suite.split,
                    metric=suite.metric,
                    seed=seed,
                    setting=suite.setting,
                    point=design.point,
                    hop_cache=hop_cache_directory(suite.hops),
                )
            )
    return runs

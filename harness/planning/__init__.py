"""Suite file -> validated Suite -> run specs: the one place a suite becomes runs.

Contenders x ablation points x seeds (`expand`), the homophily map's runs on matched synthetic
graphs (`map_specs`) and tuned settings applied to a spec (`with_settings`) all go through the
one run-spec factory `run_spec`; the schema only validates.
"""

from __future__ import annotations

import os
import tomllib
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any, Protocol

from pydantic import BaseModel, ValidationError

import harness
from harness.digest import json_digest
from harness.errors import InputError
from harness.planning.run_choices import resolve_compile, resolve_kernel, sampler_in_use
from harness.schema.ablation import (
    DEFAULT_HOP_CACHE,
    HopSettings,
    check_ablation,
    configured_points,
    point_label,
)
from harness.schema.base import format_validation_error, key_dump
from harness.schema.batching import (
    check_batching,
    check_edge_attributes,
    check_global_attention,
    check_kernel,
    check_options_apply,
)
from harness.schema.data import SyntheticData
from harness.schema.splits import FractionSplit
from harness.schema.suite import Suite
from harness.schema.tasks import DEFAULT_TASK, task_kind
from harness.schema.training import Training
from harness.schema.tuning import TRAINING_KEYS, check_tuning

HOP_CACHE_VARIABLE = "HEEDFUL_CACHE"

UNSAMPLED = {"batch_size", "fanout"}


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
    task: str = DEFAULT_TASK
    link: BaseModel | None = None  # the task's own table (`[link]` of a link suite), if any
    keep_predictions: bool = True  # store test-node probabilities (breakdown); not in the key

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
        kind = task_kind(self.task)
        if kind.keyed:  # keys of runs stored before tasks existed stay as they were
            determining["task"] = self.task
            if kind.options_section:
                determining[kind.options_section] = key_dump(self.link)
        return json_digest(determining)

    @property
    def stored_keys(self) -> frozenset[str]:
        """Keys under which this run may be stored: its own, and for a compiled run also the
        eager one, since a run whose compiling failed is stored as eager (docs/large-graphs.md)."""
        if self.training.compile is not True:
            return frozenset({self.key})
        eager = replace(self, training=self.training.model_copy(update={"compile": False}))
        return frozenset({self.key, eager.key})


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
    check_ablation(suite.contenders, suite.ablation, suite.setting, source)
    check_tuning(suite, source)  # search spaces against the contenders' options
    check_batching(suite, source)  # fan-out lengths against each contender's layers
    check_options_apply(suite, source)  # no fanout or compile that no run would use
    check_kernel(suite, source)  # the sparse kernel only for kinds that have one
    check_edge_attributes(suite, source)  # edge attributes only where tasks and data have them
    check_global_attention(suite, source)  # no full attention over a large graph at once
    return suite


def load_suite(path: str | Path) -> Suite:
    """Read and validate a suite file."""
    return parse_suite(read_suite_file(path), str(path))


@dataclass(frozen=True)
class DesignPoint:
    """One contender configuration a suite runs: its label, ablation point and options."""

    contender: str
    options: BaseModel
    point: dict[str, Any] = field(default_factory=dict)
    varied: tuple[str, ...] = ()  # axes whose level differs from the contender's own options

    @property
    def label(self) -> str:
        return point_label(self.contender, self.point)


def design_points(suite: Suite) -> list[DesignPoint]:
    """Every contender configuration of a suite, ablation points expanded, in suite order."""
    designs: list[DesignPoint] = []
    for name, point, configured in configured_points(suite.contenders, suite.ablation):
        own = suite.contenders[name]
        changed = tuple(a for a, v in point.items() if v != getattr(own, a))
        designs.append(DesignPoint(name, configured, point, changed))
    return designs


def hop_cache_directory(hops: HopSettings) -> str:
    """The environment variable wins, so one machine can move every suite's cache."""
    return os.environ.get(HOP_CACHE_VARIABLE) or hops.cache or DEFAULT_HOP_CACHE


def run_spec(
    suite: Suite,
    design: DesignPoint,
    seed: int,
    suite_name: str | None = None,
    data: BaseModel | None = None,
    split: BaseModel | None = None,
) -> RunSpec:
    """The one run-spec factory: a design point of the suite on one seed (data may differ)."""
    return RunSpec(
        suite=suite_name or suite.name,
        contender=design.contender,
        options=design.options,
        # the kernel first: whether compiling pays depends on it
        training=resolve_compile(
            resolve_kernel(
                design.options.training.apply(suite.training),
                design.options,
                suite.data if data is None else data,
            ),
            design.options.model,
            suite.data if data is None else data,
        ),
        data=suite.data if data is None else data,
        split=suite.split if split is None else split,
        metric=suite.metric,
        seed=seed,
        setting=suite.setting,
        point=design.point,
        hop_cache=hop_cache_directory(suite.hops),
        task=suite.task,
        link=suite.task_options,
        keep_predictions=suite.analysis.breakdown,
    )


def expand(suite: Suite) -> list[RunSpec]:
    """All runs of a suite: every contender and ablation point on every seed (seeds paired)."""
    return [
        run_spec(suite, design, seed) for design in design_points(suite) for seed in suite.seed_list
    ]


def with_settings(base: RunSpec, settings: dict[str, Any]) -> RunSpec:
    """A tuned repeat or trial: the spec with tuned options and training settings (validated)."""
    option_changes = {k: v for k, v in settings.items() if k not in TRAINING_KEYS}
    training_changes = {k: v for k, v in settings.items() if k in TRAINING_KEYS}
    options = type(base.options).model_validate({**base.options.model_dump(), **option_changes})
    training = Training.model_validate({**base.training.model_dump(), **training_changes})
    return replace(base, options=options, training=training)


class GraphShape(Protocol):
    """What the homophily map matches (a harness.data.profile.DatasetProfile has it)."""

    nodes: int
    class_counts: list[int]
    degrees: Any  # .mean: average degree
    features: Any  # .dimension: feature width


def map_suite_name(suite: Suite) -> str:
    """Map runs are stored under their own suite name, apart from the suite's own runs."""
    return f"{suite.name}:homophily_map"


def matched_section(profile: GraphShape, level: float, suite: Suite) -> SyntheticData:
    """A synthetic data section shaped like the profiled data, at edge homophily `level`."""
    options = suite.homophily_map
    counts = [count for count in profile.class_counts if count > 0]
    nodes = max(profile.nodes, 4)
    degree = min(max(profile.degrees.mean, 0.5), nodes - 2)
    return SyntheticData(
        source="synthetic",
        nodes=nodes,
        classes=len(counts),
        average_degree=round(degree, 3),
        edge_homophily=level,
        feature_dimension=min(profile.features.dimension, 10_000),
        feature_signal=options.feature_signal,
        class_balance=[float(count) for count in counts],
        graph_seed=options.graph_seed,
    )


def map_run_count(suite: Suite) -> int:
    """Runs the homophily map adds (as many as map_specs gives, known before any data)."""
    options = suite.homophily_map
    return 0 if options is None else len(options.levels) * len(suite.contenders) * options.seeds


def map_specs(suite: Suite, profile: GraphShape) -> list[RunSpec]:
    """Every contender (its own options, no ablation) at every level, for the map's seeds."""
    # a split column belongs to the user's data; synthetic graphs use the default fractions
    split = FractionSplit() if suite.split.method == "column" else suite.split
    name = map_suite_name(suite)
    return [
        run_spec(
            suite,
            DesignPoint(contender, options, {"edge_homophily": level}),
            seed,
            name,
            matched_section(profile, level, suite),
            split,
        )
        for level in suite.homophily_map.levels
        for contender, options in suite.contenders.items()
        for seed in range(suite.homophily_map.seeds)
    ]

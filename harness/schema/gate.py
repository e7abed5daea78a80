"""Gate settings of a suite and the shape of a saved baseline file.

Both are user input (the `[gate]` table of a suite file; a baseline JSON file that may be
committed and hand-edited), so both are validated here, at the boundary.
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field, create_model, field_validator, model_validator

from harness.schema.base import StrictModel
from harness.schema.tasks import declared_metrics

Action = Literal["fail", "warn"]
BASELINE_FORMAT = "heedful baseline"
BASELINE_FORMAT_VERSION = 1


class GateOptions(StrictModel):
    """When a nightly gate fails.

    A contender's metric fails when its mean drop exceeds `tolerance_points` (metric x 100)
    and the drop is significant at level `significance` (two-sided paired t-test on shared
    seeds). Cost checks compare mean seconds per epoch and mean peak memory with the baseline
    as ratios; above the ratio the check fails or warns, as set by its action.
    """

    tolerance_points: float = Field(1.0, ge=0, le=100)
    significance: float = Field(0.05, gt=0, lt=1)
    time_ratio: float = Field(1.5, gt=1, le=1000)
    time_action: Action = "warn"  # wall time is noisy on shared machines
    memory_ratio: float = Field(1.2, gt=1, le=1000)
    memory_action: Action = "fail"  # peak memory is measured exactly, so it is repeatable
    reproducibility_action: Action = "warn"


LOWEST = min(metric.low for metric in declared_metrics().values())
HIGHEST = max(metric.high for metric in declared_metrics().values())


class RunFigures(StrictModel):
    """One seed of one contender as recorded in a baseline, but for its `test_<metric>` figures."""

    seed: int = Field(ge=0)
    key: str = Field(min_length=1)
    test_metric: float = Field(ge=LOWEST, le=HIGHEST)
    val_metric: float | None = Field(None, ge=LOWEST, le=HIGHEST)
    epochs: int = Field(ge=1)
    seconds_per_epoch: float = Field(gt=0)
    peak_mb: float = Field(gt=0)
    params: int = Field(ge=0)


# one seed of one contender: with a `test_<metric>` figure for every declared metric, in its range
BaselineRun = create_model(
    "BaselineRun",
    __base__=RunFigures,
    __module__=__name__,
    **{
        f"test_{name}": (float | None, Field(None, ge=metric.low, le=metric.high))
        for name, metric in declared_metrics().items()
    },
)


class BaselineContender(StrictModel):
    """A contender's (or one of its ablation points') model, options and per-seed figures."""

    model: str
    options: dict
    contender: str | None = None  # the suite's contender; None: the entry's own name
    point: dict = Field(default_factory=dict)  # ablation point: axis -> level
    runs: list[BaselineRun] = Field(min_length=1)

    @field_validator("runs")
    @classmethod
    def _distinct_seeds(cls, runs: list[BaselineRun]) -> list[BaselineRun]:
        seeds = [run.seed for run in runs]
        if len(set(seeds)) != len(seeds):
            raise ValueError("allowed: each seed at most once per contender")
        return runs


class Environment(StrictModel):
    """Where the figures were measured."""

    python: str
    torch: str
    torch_geometric: str
    numpy: str
    cpu: str
    threads: int = Field(ge=1)


class BaselineFile(StrictModel):
    """The whole baseline file."""

    format: Literal["heedful baseline"]
    format_version: Literal[1]
    suite: str = Field(min_length=1)
    suite_hash: str = Field(min_length=1)
    task: dict
    metric: str  # a metric some task declares
    harness_version: str
    saved_at: str
    environment: Environment
    contenders: dict[str, BaselineContender]

    @field_validator("metric")
    @classmethod
    def _declared_metric(cls, metric: str) -> str:
        if metric not in declared_metrics():
            raise ValueError(f"allowed: {', '.join(declared_metrics())}")
        return metric

    @model_validator(mode="after")
    def _some_contenders(self) -> BaselineFile:
        if not self.contenders:
            raise ValueError("allowed: at least one contender")
        return self

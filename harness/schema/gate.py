"""Gate settings of a suite and the shape of a saved baseline file.

Both are user input (the `[gate]` table of a suite file; a baseline JSON file that may be
committed and hand-edited), so both are validated here, at the boundary.
"""

from __future__ import annotations

from typing import Any, Literal

from pydantic import Field, create_model, field_validator, model_validator

from harness.schema.base import StrictModel
from harness.schema.tasks import declared_metrics, tasks_scoring

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

    tolerance_points: float = Field(
        1.0,
        ge=0,
        le=100,
        description=(
            "Allowed drop of the mean metric, in points (metric x 100), before the "
            "paired test is asked."
        ),
    )
    significance: float = Field(
        0.05,
        gt=0,
        lt=1,
        description="Level of the paired t-test; intervals are at 1 - significance.",
    )
    time_ratio: float = Field(
        1.5,
        gt=1,
        le=1000,
        description="Largest allowed mean seconds per epoch, current over baseline.",
    )
    time_action: Action = Field(
        "warn",
        description=(
            "What a slower run does: fail or warn (wall time is noisy on shared machines)."
        ),
    )
    memory_ratio: float = Field(
        1.2,
        gt=1,
        le=1000,
        description="Largest allowed mean peak memory, current over baseline.",
    )
    memory_action: Action = Field(
        "fail",
        description="What a bigger run does: fail or warn (peak memory is measured exactly).",
    )
    reproducibility_action: Action = Field(
        "warn",
        description="What a different metric under an identical run key does: fail or warn.",
    )


LOWEST = min(metric.low for metric in declared_metrics().values())
HIGHEST = max(metric.high for metric in declared_metrics().values())


def metric_fields() -> dict[str, Any]:
    """A `test_<metric>` figure for every metric a task declares, in the metric's range."""
    return {
        f"test_{name}": (
            float | None,
            Field(
                None,
                ge=metric.low,
                le=metric.high,
                description=f"Test {metric.label} ({', '.join(tasks_scoring(name))} suites).",
            ),
        )
        for name, metric in declared_metrics().items()
    }


BaselineRun = create_model(
    "BaselineRun",
    __base__=StrictModel,
    __module__=__name__,
    __doc__="One seed of one contender as recorded in a baseline.",
    seed=(int, Field(ge=0, description="The run's seed.")),
    key=(
        str,
        Field(
            min_length=1,
            description="The run key (hash of everything that determines the result).",
        ),
    ),
    test_metric=(
        float,
        Field(ge=LOWEST, le=HIGHEST, description="Test value of the suite's metric."),
    ),
    val_metric=(
        float | None,
        Field(None, ge=LOWEST, le=HIGHEST, description="Validation value of the suite's metric."),
    ),
    **metric_fields(),
    epochs=(int, Field(ge=1, description="Epochs trained.")),
    seconds_per_epoch=(float, Field(gt=0, description="Training seconds per epoch.")),
    peak_mb=(float, Field(gt=0, description="Tensor memory of one training step, in MB.")),
    params=(int, Field(ge=0, description="Trainable parameters.")),
)


class BaselineContender(StrictModel):
    """A contender's (or one of its ablation points') model, options and per-seed figures."""

    model: str = Field(description="Model kind.")
    options: dict = Field(description="The contender's options at this point.")
    # the suite's contender; None: the entry's own name
    contender: str | None = Field(
        None,
        description="The suite's contender; absent: the entry's own name.",
    )
    # ablation point: axis -> level
    point: dict = Field(
        default_factory=dict,
        description="Ablation point: axis to level; empty without ablation.",
    )
    runs: list[BaselineRun] = Field(min_length=1, description="One entry per seed.")

    @field_validator("runs")
    @classmethod
    def _distinct_seeds(cls, runs: list[BaselineRun]) -> list[BaselineRun]:
        seeds = [run.seed for run in runs]
        if len(set(seeds)) != len(seeds):
            raise ValueError("allowed: each seed at most once per contender")
        return runs


class Environment(StrictModel):
    """Where the figures were measured."""

    python: str = Field(description="Python version.")
    torch: str = Field(description="torch version.")
    torch_geometric: str = Field(description="PyG version.")
    numpy: str = Field(description="numpy version.")
    cpu: str = Field(description="Processor model.")
    threads: int = Field(ge=1, description="torch threads per run.")


class BaselineFile(StrictModel):
    """The whole baseline file."""

    format: Literal["heedful baseline"] = Field(description="Always 'heedful baseline'.")
    format_version: Literal[1] = Field(description="Version of the file format (1).")
    suite: str = Field(min_length=1, description="The suite's name.")
    suite_hash: str = Field(
        min_length=1,
        description="Hash of the task the baseline covers (data, split, setting, metric).",
    )
    task: dict = Field(description="The task the baseline covers, as the hash reads it.")
    metric: str = Field(description="The suite's metric (one its task declares).")
    harness_version: str = Field(description="Heedful's version that saved the file.")
    saved_at: str = Field(description="When the file was saved (UTC, ISO 8601).")
    environment: Environment = Field(description="Where the figures were measured.")
    contenders: dict[str, BaselineContender] = Field(
        description="Per contender (or ablation point), its options and per-seed figures.",
    )

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

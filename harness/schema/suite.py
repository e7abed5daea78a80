"""The whole suite file."""

from __future__ import annotations

import re
from typing import Any, Literal

from pydantic import (
    BaseModel,
    Field,
    ValidationInfo,
    create_model,
    field_validator,
    model_validator,
)

from harness.schema.ablation import Ablation, HopSettings
from harness.schema.analysis import BREAKDOWN_KEYS, Analysis, unknown_contenders
from harness.schema.base import LARGEST_SEED, StrictModel
from harness.schema.data import DataSection
from harness.schema.gate import GateOptions
from harness.schema.model_kinds import ContenderOptions
from harness.schema.splits import FractionSplit, HomophilyMap, SplitSection
from harness.schema.tasks import (
    DEFAULT_TASK,
    TASKS,
    metrics_text,
    options_sections,
    task_kind,
    tasks_text,
    tasks_with,
)
from harness.schema.training import Training
from harness.schema.tuning import Tuning

Setting = Literal["transductive", "inductive"]
# names become table cells, JUnit class names (where a dot splits) and file-name parts
NAME_PATTERN = re.compile(r"[A-Za-z0-9_-]{1,64}")
NAMES_ALLOWED = "allowed: ASCII letters, digits, _ and -, 1 to 64 characters"


def task_section_problem(task: str, section: str, value: Any) -> str | None:
    """What the task declares against a section it takes: a split method it does not accept,
    breakdown settings when it has no per-node breakdown, or its own section check."""
    kind = task_kind(task)
    if section == "split" and kind.split_methods and value.method not in kind.split_methods:
        owners = " or ".join(tasks_with(value.method))
        return (
            f"method '{value.method}' is for {owners}; allowed for {kind.title}: "
            f"{', '.join(kind.split_methods)}"
        )
    if section == "analysis" and not kind.breakdown:
        for key in BREAKDOWN_KEYS:
            if key in value.model_fields_set:
                return (
                    f"{key} is for the per-node breakdown, not available for {kind.title} "
                    "(it groups scored test nodes); allowed: leave it out"
                )
    check = kind.section_checks.get(section)
    return check(value) if check else None


def check_name(name: str) -> str:
    """A suite or contender name, or ValueError saying what is allowed."""
    if not NAME_PATTERN.fullmatch(name):
        raise ValueError(NAMES_ALLOWED)
    return name


class SuiteSections(StrictModel):
    """A declarative benchmark: data, contenders, training defaults and seeds (every section but
    the tasks' own tables, which `Suite` adds from the task registry)."""

    name: str = Field(
        description=(
            "Name the suite's runs are stored and reported under: ASCII letters, "
            "digits, _ and -, 1 to 64 characters."
        ),
    )
    description: str = Field(
        "",
        description=("Free text for readers of the suite file: what it asks. Enters no run key."),
    )
    seeds: int | list[int] = Field(
        5,
        description=(
            "How many seeds (seeds 0 to N-1), or a list of distinct seeds >= 0. Each "
            "seed fixes a split and an initialisation shared by every contender; "
            "raising the count reuses the runs of the seeds already stored."
        ),
    )
    task: str = Field(
        DEFAULT_TASK,
        description=f"What the contenders predict: {tasks_text()}.",
    )
    # one of the task's metrics; its default_metric when left out
    metric: str = Field(
        TASKS[DEFAULT_TASK].default_metric,
        description=(
            f"The metric early stopping, tuning, verdicts and gates use; {metrics_text()}."
        ),
    )
    data: DataSection = Field(description="Where the graph comes from, chosen by its source key.")
    split: SplitSection = Field(
        FractionSplit(),
        description=(
            "How labelled nodes (link prediction: edges, or nodes when inductive) are"
            " split into training, validation and test, chosen by its method key."
        ),
    )
    setting: Setting = Field(
        "transductive",
        description=(
            "transductive: train on the whole graph with validation and test labels "
            "hidden; inductive: validation and test nodes and their edges are removed"
            " while training."
        ),
    )
    ablation: dict[str, Ablation] = Field(
        {},
        description="Per contender name, the options to vary and their levels.",
    )
    hops: HopSettings = Field(
        HopSettings(),
        description=(
            "Where k-hop edge sets are cached, and the attention memory a hop radius may take."
        ),
    )
    training: Training = Field(
        Training(),
        description=(
            "Training defaults of every contender; a contender's own training table overrides them."
        ),
    )
    contenders: dict[str, ContenderOptions] = Field(
        description="The models compared, one table per contender name; model picks the kind.",
    )
    gate: GateOptions = Field(GateOptions(), description="When a nightly gate fails.")
    analysis: Analysis = Field(
        Analysis(),
        description=("How stored runs are judged; changes nothing stored and enters no run key."),
    )
    tuning: Tuning | None = Field(
        None,
        description="Tune every contender with the same budget before the comparison.",
    )
    homophily_map: HomophilyMap | None = Field(
        None,
        description=(
            "Also run the contenders on synthetic graphs shaped like this data at "
            "several edge homophily levels."
        ),
    )

    @model_validator(mode="before")
    @classmethod
    def _task_default_metric(cls, data: Any) -> Any:
        if isinstance(data, dict) and "metric" not in data and data.get("task") in TASKS:
            return {**data, "metric": task_kind(data["task"]).default_metric}
        return data

    @field_validator("task")
    @classmethod
    def _registered_task(cls, task: str) -> str:
        if task not in TASKS:
            raise ValueError(f"allowed: {', '.join(TASKS)}")
        return task

    @field_validator("metric")
    @classmethod
    def _metric_of_task(cls, metric: str, info: ValidationInfo) -> str:
        task = info.data.get("task", DEFAULT_TASK)
        names = task_kind(task).metric_names
        if metric not in names:
            raise ValueError(f"allowed for task '{task}': {', '.join(names)}")
        return metric

    @field_validator("*")
    @classmethod
    def _fits_the_task(cls, value: Any, info: ValidationInfo) -> Any:
        task = info.data.get("task", DEFAULT_TASK)
        if task not in TASKS or info.field_name == "task":
            return value  # a field before `task`, or an unknown task (its own error is reported)
        owner = options_sections().get(info.field_name, task)
        if value is not None and owner != task:
            raise ValueError(
                f"[{info.field_name}] is for task = '{owner}'; this suite's task is '{task}'"
            )
        reason = task_kind(task).refused.get(info.field_name)
        if reason and value is not None:
            raise ValueError(f"not available for {task_kind(task).title}: {reason}")
        problem = task_section_problem(task, info.field_name, value) if value is not None else None
        if problem:
            raise ValueError(problem)
        return value

    @field_validator("name")
    @classmethod
    def _plain_name(cls, name: str) -> str:
        return check_name(name)

    @field_validator("seeds")
    @classmethod
    def _valid_seeds(cls, seeds: int | list[int]) -> int | list[int]:
        if isinstance(seeds, int):
            if not 1 <= seeds <= 10_000:
                raise ValueError("allowed: a count from 1 to 10000, or a list of seeds")
        else:
            if not seeds:
                raise ValueError("allowed: a non-empty list of seeds")
            if any(not 0 <= s <= LARGEST_SEED for s in seeds) or len(set(seeds)) != len(seeds):
                raise ValueError(f"allowed: distinct seeds >= 0 and <= {LARGEST_SEED} (2**32 - 1)")
        return seeds

    @field_validator("contenders")
    @classmethod
    def _some_contenders(cls, contenders: dict) -> dict:
        if not contenders:
            raise ValueError("allowed: at least one [contenders.NAME] table")
        for name in contenders:
            if not NAME_PATTERN.fullmatch(name):
                raise ValueError(f"contender name {name!r} is not allowed; {NAMES_ALLOWED}")
        return contenders

    @field_validator("analysis")
    @classmethod
    def _analysis_names_contenders(cls, analysis: Analysis, info: ValidationInfo) -> Analysis:
        problem = unknown_contenders(analysis, list(info.data.get("contenders", {})))
        if problem:
            raise ValueError(problem)
        return analysis

    @property
    def task_options(self) -> BaseModel | None:
        """The task's own table (e.g. `[link]`) or its defaults; None for a task without one."""
        kind = task_kind(self.task)
        if kind.options_section is None:
            return None
        return getattr(self, kind.options_section) or kind.options()

    @property
    def seed_list(self) -> list[int]:
        return list(range(self.seeds)) if isinstance(self.seeds, int) else list(self.seeds)


def task_tables() -> dict[str, Any]:
    """A field for each task's own table (`[link]`): its options class, absent by default."""
    return {
        kind.options_section: (
            kind.options | None,
            Field(
                None,
                description=f"{first_line(kind.options)} (only with task = {name}).",
            ),
        )
        for name, kind in TASKS.items()
        if kind.options_section
    }


def first_line(model: type[BaseModel]) -> str:
    return (model.__doc__ or "").strip().splitlines()[0].rstrip(".")


# the suite file: every section, and each registered task's own table
Suite = create_model(
    "Suite",
    __base__=SuiteSections,
    __module__=__name__,
    __doc__=SuiteSections.__doc__,
    **task_tables(),
)

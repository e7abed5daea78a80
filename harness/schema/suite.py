"""The whole suite file."""

from __future__ import annotations

import re
from typing import Any, ClassVar, Literal

from pydantic import Field, ValidationInfo, field_validator, model_validator

from harness.schema.ablation import Ablation, HopSettings
from harness.schema.analysis import Analysis, unknown_contenders
from harness.schema.base import LARGEST_SEED, StrictModel
from harness.schema.data import DataSection
from harness.schema.gate import GateOptions
from harness.schema.model_kinds import ContenderOptions
from harness.schema.splits import FractionSplit, HomophilyMap, SplitSection
from harness.schema.tasks import DEFAULT_TASK, NOT_FOR_LINKS, TASK_METRICS, LinkOptions, Task
from harness.schema.training import Training
from harness.schema.tuning import Tuning

Setting = Literal["transductive", "inductive"]
# names become table cells, JUnit class names (where a dot splits) and file-name parts
NAME_PATTERN = re.compile(r"[A-Za-z0-9_-]{1,64}")
NAMES_ALLOWED = "allowed: ASCII letters, digits, _ and -, 1 to 64 characters"


def link_split_problem(split: SplitSection) -> str | None:
    """What a link suite's split may not be: another method, or shares not summing to 1."""
    if split.method != "fractions":
        return (
            f"method '{split.method}' is for node classification; allowed for link "
            "prediction: fractions (shares of the edges, or of the nodes when inductive)"
        )
    total = split.train + split.validation + split.test
    if abs(total - 1) > 1e-9:
        return (
            f"train + validation + test = {total:g}; allowed for link prediction: shares "
            "of the edges (of the nodes when inductive) that sum to 1"
        )
    return None


def link_analysis_problem(analysis: Analysis) -> str | None:
    """Bin edges of the per-node breakdown, which groups scored test nodes, not edges."""
    for key in ("local_homophily_edges", "degree_edges", "breakdown"):
        if key in analysis.model_fields_set:
            return (
                f"{key} is for the per-node breakdown, not available for link prediction "
                "(it groups scored test nodes); allowed: leave it out"
            )
    return None


LINK_SECTION_CHECKS = {"split": link_split_problem, "analysis": link_analysis_problem}


def check_name(name: str) -> str:
    """A suite or contender name, or ValueError saying what is allowed."""
    if not NAME_PATTERN.fullmatch(name):
        raise ValueError(NAMES_ALLOWED)
    return name


class Suite(StrictModel):
    """A declarative benchmark: data, contenders, training defaults and seeds."""

    keyed_when_set: ClassVar[frozenset[str]] = frozenset({"task", "link"})

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
    task: Task = Field(
        DEFAULT_TASK,
        description=(
            "What the contenders predict: node_classification (one class per node) or"
            " link_prediction (which node pairs are edges)."
        ),
    )
    # one of the task's TASK_METRICS
    metric: str = Field(
        "accuracy",
        description=(
            "The metric early stopping, tuning, verdicts and gates use; "
            "node_classification: accuracy (default), macro_f1, roc_auc (one-vs-"
            "rest); link_prediction: roc_auc (default), average_precision, hits_at_k."
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
    link: LinkOptions | None = Field(
        None,
        description=(
            "Decoder and negatives of a link prediction suite (only with task = link_prediction)."
        ),
    )

    @model_validator(mode="before")
    @classmethod
    def _task_default_metric(cls, data: Any) -> Any:
        if isinstance(data, dict) and "metric" not in data and data.get("task") in TASK_METRICS:
            return {**data, "metric": TASK_METRICS[data["task"]][0]}
        return data

    @field_validator("metric")
    @classmethod
    def _metric_of_task(cls, metric: str, info: ValidationInfo) -> str:
        task = info.data.get("task", DEFAULT_TASK)
        if metric not in TASK_METRICS[task]:
            raise ValueError(f"allowed for task '{task}': {', '.join(TASK_METRICS[task])}")
        return metric

    @field_validator("link")
    @classmethod
    def _link_needs_link_task(cls, link: LinkOptions | None, info: ValidationInfo) -> Any:
        task = info.data.get("task", DEFAULT_TASK)
        if link is not None and task != "link_prediction":
            raise ValueError(
                f"[link] is for task = 'link_prediction'; this suite's task is '{task}'"
            )
        return link

    @field_validator("split", "analysis")
    @classmethod
    def _fits_link_prediction(cls, value: Any, info: ValidationInfo) -> Any:
        if info.data.get("task") == "link_prediction":
            problem = LINK_SECTION_CHECKS[info.field_name](value)
            if problem:
                raise ValueError(problem)
        return value

    @field_validator(*NOT_FOR_LINKS)
    @classmethod
    def _not_for_links(cls, value: Any, info: ValidationInfo) -> Any:
        if value is not None and info.data.get("task") == "link_prediction":
            raise ValueError(f"not available for link prediction: {NOT_FOR_LINKS[info.field_name]}")
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
    def link_options(self) -> LinkOptions:
        """The `[link]` table, or its defaults."""
        return self.link or LinkOptions()

    @property
    def seed_list(self) -> list[int]:
        return list(range(self.seeds)) if isinstance(self.seeds, int) else list(self.seeds)

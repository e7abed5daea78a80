"""The whole suite file."""

from __future__ import annotations

import re
from typing import Literal

from pydantic import ValidationInfo, field_validator

from harness.schema.ablation import Ablation, HopSettings
from harness.schema.analysis import Analysis, unknown_contenders
from harness.schema.base import StrictModel
from harness.schema.data import DataSection, FractionSplit, HomophilyMap, SplitSection
from harness.schema.gate import GateOptions
from harness.schema.model_kinds import ContenderOptions
from harness.schema.training import Training
from harness.schema.tuning import Tuning

Metric = Literal["accuracy", "macro_f1", "roc_auc"]
Setting = Literal["transductive", "inductive"]
# names become table cells, JUnit class names (where a dot splits) and file-name parts
NAME_PATTERN = re.compile(r"[A-Za-z0-9_-]{1,64}")
NAMES_ALLOWED = "allowed: ASCII letters, digits, _ and -, 1 to 64 characters"


def check_name(name: str) -> str:
    """A suite or contender name, or ValueError saying what is allowed."""
    if not NAME_PATTERN.fullmatch(name):
        raise ValueError(NAMES_ALLOWED)
    return name


class Suite(StrictModel):
    """A declarative benchmark: data, contenders, training defaults and seeds."""

    name: str
    description: str = ""
    seeds: int | list[int] = 5
    metric: Metric = "accuracy"
    data: DataSection
    split: SplitSection = FractionSplit()
    setting: Setting = "transductive"
    ablation: dict[str, Ablation] = {}
    hops: HopSettings = HopSettings()
    training: Training = Training()
    contenders: dict[str, ContenderOptions]
    gate: GateOptions = GateOptions()
    analysis: Analysis = Analysis()
    tuning: Tuning | None = None
    homophily_map: HomophilyMap | None = None

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
            if any(s < 0 for s in seeds) or len(set(seeds)) != len(seeds):
                raise ValueError("allowed: distinct seeds >= 0")
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
    def seed_list(self) -> list[int]:
        return list(range(self.seeds)) if isinstance(self.seeds, int) else list(self.seeds)

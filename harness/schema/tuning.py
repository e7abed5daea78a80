"""The tuning section: search spaces, one budget shared by every contender, pruning, sizing.

Every contender is tuned (fairness): a contender without its own `[tuning.space.NAME]` table
gets the defaults of its model kind (`default_space`). Ranges sample uniformly, or
log-uniformly with `log = true`; lists are choices.
"""

from __future__ import annotations

import math
from typing import Any, Literal

from pydantic import Field, ValidationError, model_validator

from harness.errors import InputError
from harness.schema.base import LARGEST_SEED, StrictModel, show
from harness.schema.model_kinds import attends
from harness.schema.training import Training


class Range(StrictModel):
    """An interval [low, high]; integer options take whole-number bounds."""

    low: float = Field(description="Lowest value.")
    high: float = Field(description="Highest value (above low).")
    log: bool = Field(False, description="Sample log-uniformly (low must be above 0).")

    @model_validator(mode="after")
    def _not_empty(self) -> Range:
        if not self.low < self.high:
            raise ValueError(f"low {self.low:g} >= high {self.high:g}; allowed: low < high")
        if self.log and self.low <= 0:
            raise ValueError(
                f"log range from {self.low:g} includes 0 or negatives; allowed: low > 0 with log"
            )
        return self


Choices = list[bool | int | float | str]
SpaceEntry = Range | Choices


class Tuning(StrictModel):
    """One budget for every contender; trials and/or seconds of training per contender."""

    trials: int | None = Field(
        None,
        ge=1,
        le=100_000,
        description="Finished trials per contender (the same for all).",
    )
    seconds: float | None = Field(
        None,
        gt=0,
        le=30 * 24 * 3600,
        description="Seconds of trial time per contender.",
    )
    pruner: Literal["median", "halving", "none"] = Field(
        "median",
        description=("Stops hopeless trials early: median, halving (successive halving) or none."),
    )
    seed: int = Field(0, ge=0, le=LARGEST_SEED, description="Seed of the sampler.")
    equal_parameters: str | int | None = Field(
        None,
        description=(
            "Size each contender's hidden width to this contender's parameter count "
            "(a name), or to a count."
        ),
    )
    heartbeat_seconds: int = Field(
        10,
        ge=1,
        le=3600,
        description=(
            "Seconds between a running trial's heartbeats; a trial silent for three "
            "times this long is taken as dead."
        ),
    )
    space: dict[str, dict[str, SpaceEntry]] = Field(
        {},
        description=(
            "Per contender, option name to a range (low, high, log) or a list of "
            "choices; default: the model kind's space."
        ),
    )

    @model_validator(mode="after")
    def _has_budget(self) -> Tuning:
        if self.trials is None and self.seconds is None:
            raise ValueError("no budget; allowed: trials, seconds, or both")
        if isinstance(self.equal_parameters, int) and self.equal_parameters < 1:
            raise ValueError("equal_parameters: allowed: a contender name or a count >= 1")
        return self

    @property
    def grace_seconds(self) -> int:
        """A running trial whose heartbeat is older than this is taken as dead."""
        return 3 * self.heartbeat_seconds


TRAINING_KEYS = ("learning_rate", "weight_decay", "epochs", "patience")
NOT_TUNABLE = ("model", "training")


def default_space(model: str, equal_parameters: bool) -> dict[str, SpaceEntry]:
    """Defaults per model kind: common practice ranges for small full-batch node classifiers."""
    space: dict[str, SpaceEntry] = {
        "learning_rate": Range(low=1e-3, high=5e-2, log=True),
        "weight_decay": Range(low=1e-6, high=1e-2, log=True),
        "dropout": Range(low=0.0, high=0.7),
    }
    if attends(model):
        space["heads"] = [1, 2, 4, 8]
        space["attention_dropout"] = Range(low=0.0, high=0.6)
        if not equal_parameters:
            space["hidden"] = Range(low=4, high=32)
    elif not equal_parameters:
        space["hidden"] = Range(low=16, high=128)
    return space


def spaces(tuning: Tuning, contenders: dict[str, Any]) -> dict[str, dict[str, SpaceEntry]]:
    """The search space of every contender: its own table, or its kind's defaults."""
    sized = tuning.equal_parameters is not None
    return {
        name: tuning.space.get(name) or default_space(options.model, sized)
        for name, options in contenders.items()
    }


def is_integer_option(options: Any, key: str) -> bool:
    """Options whose default is a whole number (hidden, heads, layers, epochs) take integers."""
    field = type(options).model_fields.get(key) or Training.model_fields.get(key)
    default = None if field is None else field.default
    return isinstance(default, int) and not isinstance(default, bool)


def _check_value(options: Any, key: str, value: Any) -> str | None:
    """Why `value` is not allowed for option `key`, or None when it is."""
    try:
        if key in TRAINING_KEYS:
            Training.model_validate({key: value})
        else:
            type(options).model_validate({**options.model_dump(), key: value})
    except ValidationError as error:
        return error.errors(include_url=False)[0]["msg"].removeprefix("Value error, ")
    return None


def check_tuning(suite: Any, source: str) -> None:
    """Cross-checks of the tuning section against the contenders; errors name the key path."""
    tuning: Tuning | None = getattr(suite, "tuning", None)
    if tuning is None:
        return
    if getattr(suite, "ablation", None):
        raise InputError(
            f"{source}: tuning: a suite with ablation tables cannot also be tuned; allowed: "
            "tune in one suite, then copy the chosen settings into the ablation suite"
        )
    for name in tuning.space:
        if name not in suite.contenders:
            raise InputError(
                f"{source}: tuning.space.{name}: no contender of that name; allowed: "
                f"{', '.join(suite.contenders)}"
            )
    target = tuning.equal_parameters
    if isinstance(target, str) and target not in suite.contenders:
        raise InputError(
            f"{source}: tuning.equal_parameters: given {target!r}; allowed: a parameter count "
            f"or a contender name ({', '.join(suite.contenders)})"
        )
    for name, space in spaces(tuning, suite.contenders).items():
        options = suite.contenders[name]
        allowed = [k for k in type(options).model_fields if k not in NOT_TUNABLE]
        for key, entry in space.items():
            where = f"{source}: tuning.space.{name}.{key}"
            if key not in allowed and key not in TRAINING_KEYS:
                raise InputError(
                    f"{where}: model kind '{options.model}' has no option '{key}'; allowed: "
                    f"{', '.join(allowed + list(TRAINING_KEYS))}"
                )
            if key == "hidden" and target is not None:
                raise InputError(
                    f"{where}: hidden is sized by tuning.equal_parameters; allowed: remove it"
                )
            _check_entry(where, options, key, entry)


def _check_entry(where: str, options: Any, key: str, entry: SpaceEntry) -> None:
    if isinstance(entry, Range):
        if is_integer_option(options, key) and not (
            float(entry.low).is_integer() and float(entry.high).is_integer()
        ):
            raise InputError(
                f"{where}: given {entry.low:g}..{entry.high:g}; allowed: whole-number bounds "
                "for an integer option"
            )
        values = [int(v) if is_integer_option(options, key) else v for v in (entry.low, entry.high)]
    else:
        if not entry:
            raise InputError(f"{where}: given an empty list; allowed: one or more choices")
        values = list(entry)
    for value in values:
        if isinstance(value, float) and not math.isfinite(value):
            raise InputError(f"{where}: given {value}; allowed: finite numbers")
        problem = _check_value(options, key, value)
        if problem:
            raise InputError(f"{where}: given {show(value)}; {problem}")

"""Ablation grids and hop settings: which options of a contender a suite varies.

An `[ablation.NAME]` table varies options of contender NAME. Its `axes` map an option name to
the levels it takes. Mode `grid` runs the full cartesian product of all levels; mode
`one_at_a_time` runs the contender's own options once (the base point) and then sweeps each
axis alone while the other options keep their base values, which is cheaper for screening.
Each run's `point` holds its level on every axis (in one-at-a-time mode, the base value on the
axes it does not sweep), so every point has the same coordinates in both modes.
"""

from __future__ import annotations

import difflib
import itertools
from collections.abc import Iterator
from typing import Any, Literal

from pydantic import BaseModel, Field, TypeAdapter, ValidationError, field_validator

from harness.errors import InputError
from harness.schema.base import StrictModel, show
from harness.schema.contenders import ATTENTION_ONLY
from harness.schema.model_kinds import ContenderOptions, attention_kinds

DEFAULT_HOP_CACHE = "runs/cache"
OPTIONS = TypeAdapter(ContenderOptions)


class Ablation(StrictModel):
    """Options of one contender to vary, each with the levels it takes."""

    mode: Literal["grid", "one_at_a_time"] = Field(
        "one_at_a_time",
        description=(
            "one_at_a_time: the contender's own options once, then each axis swept "
            "alone; grid: every combination of the levels."
        ),
    )
    axes: dict[str, list[Any]] = Field(
        description="Option name to the list of levels it takes, e.g. heads = [1, 4].",
    )

    @field_validator("axes")
    @classmethod
    def _some_levels(cls, axes: dict[str, list[Any]]) -> dict[str, list[Any]]:
        if not axes:
            raise ValueError("allowed: at least one axis, e.g. heads = [1, 4]")
        for axis, levels in axes.items():
            if not levels:
                raise ValueError(f"axis '{axis}' has no levels; allowed: a non-empty list")
            if any(levels.count(level) > 1 for level in levels):
                raise ValueError(f"axis '{axis}' repeats a level; allowed: distinct levels")
        return axes


class HopSettings(StrictModel):
    """Where k-hop edge sets are cached, and how much memory attention over them may take.

    The cache directory is the `HEEDFUL_CACHE` environment variable if set, else `cache`,
    else runs/cache.
    """

    memory_budget_mb: float = Field(
        1024.0,
        gt=0,
        le=1_000_000,
        description=(
            "Largest estimated attention memory, in MB, for a hop radius above 1; "
            "check stops above it."
        ),
    )
    cache: str | None = Field(
        None,
        min_length=1,
        description=(
            "Folder of the k-hop edge cache, compiled code and PyG's generated "
            "modules; default runs/cache; the HEEDFUL_CACHE environment variable "
            "wins."
        ),
    )


def level_text(value: Any) -> str:
    if isinstance(value, bool):
        return str(value).lower()
    if isinstance(value, list):
        return "/".join(level_text(v) for v in value)
    return str(value)


def point_label(contender: str, point: dict[str, Any]) -> str:
    """`attention[heads=4,hop_radius=2]`: the contender name with the point it runs."""
    if not point:
        return contender
    return contender + "[" + ",".join(f"{k}={level_text(v)}" for k, v in point.items()) + "]"


def with_levels(options: BaseModel, changes: dict[str, Any]) -> BaseModel:
    """The contender's options with some changed, validated again."""
    return OPTIONS.validate_python({**options.model_dump(exclude_unset=True), **changes})


def _error_text(error: ValidationError) -> str:
    return error.errors(include_url=False)[0]["msg"].removeprefix("Value error, ")


def _check_axes(name: str, options: BaseModel, ablation: Ablation, source: str) -> None:
    allowed = [f for f in type(options).model_fields if f != "training"]
    for axis, levels in ablation.axes.items():
        where = f"{source}: ablation.{name}.axes.{axis}"
        if axis not in allowed:
            if axis in ATTENTION_ONLY:
                raise InputError(
                    f"{where}: model '{options.model}' has no attention; allowed only for "
                    f"{', '.join(attention_kinds())}"
                )
            hint = difflib.get_close_matches(axis, allowed, n=1)
            maybe = f" (did you mean '{hint[0]}'?)" if hint else ""
            raise InputError(f"{where}: unknown option{maybe}; allowed: {', '.join(allowed)}")
        for level in levels:
            try:
                with_levels(options, {axis: level})
            except ValidationError as error:
                raise InputError(f"{where}: given {show(level)}; {_error_text(error)}") from None


def ablation_points(options: BaseModel, ablation: Ablation) -> list[dict[str, Any]]:
    """The points an ablation table runs, in order (see the module docstring for the modes)."""
    axes = ablation.axes
    if ablation.mode == "grid":
        return [
            dict(zip(axes, levels, strict=True)) for levels in itertools.product(*axes.values())
        ]
    base = {axis: getattr(options, axis) for axis in axes}
    points = [base]
    for axis, levels in axes.items():
        points += [base | {axis: level} for level in levels if level != base[axis]]
    return points


def configured_points(
    contenders: dict[str, BaseModel], ablations: dict[str, Ablation]
) -> Iterator[tuple[str, dict[str, Any], BaseModel]]:
    """(contender, point, options at that point) for every configuration, in suite order;
    only for tables check_ablation has passed."""
    for name, options in contenders.items():
        ablation = ablations.get(name)
        if ablation is None:
            yield name, {}, options
            continue
        for point in ablation_points(options, ablation):
            yield name, point, with_levels(options, point)


def check_ablation(
    contenders: dict[str, BaseModel],
    ablations: dict[str, Ablation],
    setting: str,
    source: str = "suite",
) -> None:
    """Every ablation table names a contender, and each of its points is valid options."""
    for name in ablations:
        if name not in contenders:
            hint = difflib.get_close_matches(name, list(contenders), n=1)
            maybe = f" (did you mean '{hint[0]}'?)" if hint else ""
            raise InputError(
                f"{source}: ablation.{name}: no contender of that name{maybe}; allowed: "
                f"{', '.join(contenders)}"
            )
    identity = None  # unseen nodes have no embedding row: reported after the points' errors
    for name, options in contenders.items():
        ablation = ablations.get(name)
        if ablation is None:
            identity = identity or (options.feature_start == "identity" and f"contenders.{name}")
            continue
        _check_axes(name, options, ablation, source)
        for point in ablation_points(options, ablation):
            try:
                configured = with_levels(options, point)
            except ValidationError as error:
                raise InputError(
                    f"{source}: ablation.{name}: point {point_label(name, point)}: "
                    f"{_error_text(error)}"
                ) from None
            if not identity and configured.feature_start == "identity":
                varied = point.get("feature_start", "identity") != options.feature_start
                identity = f"ablation.{name}.axes" if varied else f"contenders.{name}"
    if setting == "inductive" and identity:
        raise InputError(
            f"{source}: {identity}.feature_start: given 'identity' with setting 'inductive'; "
            "unseen nodes have no embedding row; allowed: any other feature start, or "
            "setting 'transductive'"
        )

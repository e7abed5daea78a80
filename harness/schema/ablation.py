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
import os
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, Literal

from pydantic import BaseModel, Field, TypeAdapter, ValidationError, field_validator

from harness.errors import InputError
from harness.schema.base import StrictModel, show
from harness.schema.contenders import ATTENTION_KINDS, ATTENTION_ONLY, ContenderOptions

if TYPE_CHECKING:
    from harness.schema.suite import Suite

DEFAULT_HOP_CACHE = "runs/cache"
HOP_CACHE_VARIABLE = "HEEDFUL_CACHE"
OPTIONS = TypeAdapter(ContenderOptions)


class Ablation(StrictModel):
    """Options of one contender to vary, each with the levels it takes."""

    mode: Literal["grid", "one_at_a_time"] = "one_at_a_time"
    axes: dict[str, list[Any]]

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

    memory_budget_mb: float = Field(1024.0, gt=0, le=1_000_000)
    cache: str | None = Field(None, min_length=1)


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


def _with(options: BaseModel, changes: dict[str, Any]) -> BaseModel:
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
                    f"{', '.join(ATTENTION_KINDS)}"
                )
            hint = difflib.get_close_matches(axis, allowed, n=1)
            maybe = f" (did you mean '{hint[0]}'?)" if hint else ""
            raise InputError(f"{where}: unknown option{maybe}; allowed: {', '.join(allowed)}")
        for level in levels:
            try:
                _with(options, {axis: level})
            except ValidationError as error:
                raise InputError(f"{where}: given {show(level)}; {_error_text(error)}") from None


def _points(options: BaseModel, ablation: Ablation) -> list[dict[str, Any]]:
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


def design_points(suite: Suite, source: str = "suite") -> list[DesignPoint]:
    """Every contender configuration of a suite, ablation points expanded, in suite order."""
    for name in suite.ablation:
        if name not in suite.contenders:
            hint = difflib.get_close_matches(name, list(suite.contenders), n=1)
            maybe = f" (did you mean '{hint[0]}'?)" if hint else ""
            raise InputError(
                f"{source}: ablation.{name}: no contender of that name{maybe}; allowed: "
                f"{', '.join(suite.contenders)}"
            )
    designs: list[DesignPoint] = []
    for name, options in suite.contenders.items():
        ablation = suite.ablation.get(name)
        if ablation is None:
            designs.append(DesignPoint(name, options))
            continue
        _check_axes(name, options, ablation, source)
        for point in _points(options, ablation):
            try:
                configured = _with(options, point)
            except ValidationError as error:
                raise InputError(
                    f"{source}: ablation.{name}: point {point_label(name, point)}: "
                    f"{_error_text(error)}"
                ) from None
            changed = tuple(a for a, v in point.items() if v != getattr(options, a))
            designs.append(DesignPoint(name, configured, point, changed))
    if suite.setting == "inductive":
        for design in designs:
            if design.options.feature_start == "identity":
                where = (
                    f"ablation.{design.contender}.axes.feature_start"
                    if "feature_start" in design.varied
                    else f"contenders.{design.contender}.feature_start"
                )
                raise InputError(
                    f"{source}: {where}: given 'identity' with setting 'inductive'; unseen "
                    "nodes have no embedding row; allowed: any other feature start, or "
                    "setting 'transductive'"
                )
    return designs


def hop_cache_directory(hops: HopSettings) -> str:
    """The environment variable wins, so one machine can move every suite's cache."""
    return os.environ.get(HOP_CACHE_VARIABLE) or hops.cache or DEFAULT_HOP_CACHE

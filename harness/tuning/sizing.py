"""Equal-parameter mode: size each contender's hidden width to a common parameter count.

The parameter count of every contender kind grows with the hidden width (for attention the
width per head), so the width whose count is nearest the target is found by bisection over
freshly built models. A contender matches when |count - target| <= 10% of the target.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any

import pandas as pd
from pydantic import BaseModel

from harness.data import load_graph
from harness.data.feature_starts import start_features
from harness.errors import InputError
from harness.models import build_model
from harness.models.generated import generated_modules_in
from harness.planning import RunSpec
from harness.schema.tasks import task_kind

TOLERANCE = 0.10
WIDEST = 4096


@dataclass(frozen=True)
class Sized:
    """One contender's width chosen for the target, and how close it came."""

    contender: str
    hidden: int
    params: int
    target: int

    @property
    def deviation(self) -> float:
        return (self.params - self.target) / self.target


def dimensions(spec: RunSpec) -> tuple[int, int, int]:
    """Input width, output width (classes, or what the task's options set, e.g. a link suite's
    embedding width) and embedding rows of the graph the contender starts from."""
    data = load_graph(spec.data)
    started = start_features(data, spec.options, spec.seed)
    option = task_kind(spec.task).output_option
    outputs = getattr(spec.link, option) if option else int(data.y.max()) + 1
    return started.width, outputs, started.embedding_rows


def parameter_count(options: BaseModel, in_dim: int, out_dim: int, embedding_rows: int = 0) -> int:
    model = build_model(options, in_dim, out_dim, embedding_rows)
    return sum(p.numel() for p in model.parameters())


def _valid_widths(options: BaseModel) -> int:
    """The widest hidden width the options' schema accepts."""
    high = WIDEST
    while high > 1:
        try:
            type(options).model_validate({**options.model_dump(), "hidden": high})
            return high
        except ValueError:
            high //= 2
    return 1


def size_hidden(spec: RunSpec, target: int) -> Sized:
    """The hidden width whose parameter count is nearest `target` (bisection; counts grow)."""
    shape = dimensions(spec)

    def count(hidden: int) -> int:
        with generated_modules_in(spec.hop_cache):
            return parameter_count(spec.options.model_copy(update={"hidden": hidden}), *shape)

    low, high = 1, _valid_widths(spec.options)
    while low < high:  # smallest width with count >= target
        middle = (low + high) // 2
        if count(middle) >= target:
            high = middle
        else:
            low = middle + 1
    candidates = {width: count(width) for width in {low, max(1, low - 1)}}
    hidden = min(candidates, key=lambda width: abs(candidates[width] - target))
    sized = Sized(spec.contender, hidden, candidates[hidden], target)
    if abs(sized.deviation) > TOLERANCE:
        raise InputError(
            f"tuning.equal_parameters: contender '{spec.contender}' ({spec.model}, "
            f"{spec.options.layers} layers) comes no nearer than {sized.params} parameters to "
            f"the target {target}; allowed: a target within 10% of a reachable count"
        )
    return sized


def target_count(target: str | int, bases: dict[str, RunSpec]) -> int:
    """A given count, or the named contender's count with its options as written."""
    if isinstance(target, int):
        return target
    spec = bases[target]
    with generated_modules_in(spec.hop_cache):
        return parameter_count(spec.options, *dimensions(spec))


def sizer(target: int):  # noqa: ANN201 - returns Callable[[RunSpec], RunSpec]
    """A function that resizes a spec's hidden width to the target."""

    def resize(spec: RunSpec) -> RunSpec:
        sized = size_hidden(spec, target)
        return replace(spec, options=spec.options.model_copy(update={"hidden": sized.hidden}))

    return resize


def attribute_frame(items: list[Any], columns: dict[str, str]) -> pd.DataFrame:
    """One row per item: each column (key) holds the item's attribute of that name (value)."""
    return pd.DataFrame(
        [{column: getattr(item, name) for column, name in columns.items()} for item in items]
    )


def parameter_table(sized: list[Sized]) -> pd.DataFrame:
    """Contender, hidden width, parameters, target and relative deviation."""
    names = ("contender", "hidden", "params", "target", "deviation")
    return attribute_frame(sized, {name: name for name in names})

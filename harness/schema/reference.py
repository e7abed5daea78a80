"""The suite-file reference, written from the schema itself: every key with its type, default,
allowed values and description, one Markdown table per TOML table. The documentation build
(docs/hooks/generated_pages.py) writes it into the site, so the reference cannot drift from
what the schema accepts; tests/test_suite_reference.py checks it covers every field.
"""

from __future__ import annotations

import inspect
import json
from collections.abc import Iterator
from dataclasses import dataclass
from types import NoneType, UnionType
from typing import Annotated, Any, Literal, Union, get_args, get_origin

from annotated_types import Ge, Gt, Le, Lt, MinLen
from pydantic import BaseModel
from pydantic.fields import FieldInfo
from pydantic_core import PydanticUndefined

from harness.schema.base import StrictModel
from harness.schema.gate import BaselineFile
from harness.schema.suite import Suite


@dataclass(frozen=True)
class Row:
    """One key of a table."""

    key: str
    kind: str
    default: str
    allowed: str
    description: str


@dataclass(frozen=True)
class Section:
    """One TOML table (or JSON object) and the model class it is read into; `variant` says
    which key value selects this form of the table (`source = "synthetic"`), if any."""

    title: str
    model: type[BaseModel]
    rows: tuple[Row, ...]
    variant: str = ""


def _branches(annotation: Any) -> list[Any]:
    """Alternatives of a union, Annotated wrappers kept (their metadata holds the bounds)."""
    if get_origin(annotation) in (Union, UnionType):
        return [b for argument in get_args(annotation) for b in _branches(argument)]
    return [annotation]


def _bare(annotation: Any) -> Any:
    """The annotation without Annotated."""
    while get_origin(annotation) is Annotated:
        annotation = get_args(annotation)[0]
    return annotation


def _bounds(metadata: list[Any]) -> str:
    """Bounds of pydantic metadata as text: `1 to 16`, `> 0`, `at least 1 entry`."""
    found = {type(item): item for item in metadata if isinstance(item, Ge | Gt | Le | Lt | MinLen)}
    parts = []
    low = found.get(Ge) or found.get(Gt)
    high = found.get(Le) or found.get(Lt)
    if isinstance(low, Ge) and isinstance(high, Le):
        parts.append(f"{_number(low.ge)} to {_number(high.le)}")
    else:
        if low is not None:
            parts.append(f">= {_number(low.ge)}" if isinstance(low, Ge) else f"> {_number(low.gt)}")
        if high is not None:
            parts.append(
                f"<= {_number(high.le)}" if isinstance(high, Le) else f"< {_number(high.lt)}"
            )
    if MinLen in found:
        parts.append("not empty")
    return ", ".join(parts)


def _number(value: Any) -> str:
    return f"{value:,}".replace(",", " ") if isinstance(value, int) else f"{value:g}"


def _metadata(annotation: Any) -> list[Any]:
    if get_origin(annotation) is Annotated:
        return [m for item in get_args(annotation)[1:] for m in getattr(item, "metadata", [item])]
    return []


def _describe_type(annotation: Any) -> tuple[str, list[str]]:
    """(type words, allowed parts) of one annotation, without None."""
    kinds: list[str] = []
    allowed: list[str] = []
    for branch in _branches(annotation):
        bare = _bare(branch)
        if bare is NoneType:
            continue
        bounds = _bounds(_metadata(branch))
        if get_origin(bare) is Literal:
            values = get_args(bare)
            kinds.append("integer" if all(isinstance(v, int) for v in values) else "text")
            allowed.append(", ".join(_value(v) for v in values))
        elif get_origin(bare) is list:
            item = get_args(bare)[0] if get_args(bare) else Any
            inner, inner_allowed = _describe_type(item)
            kinds.append(f"list of {inner}")
            allowed += [f"each {part}" for part in inner_allowed if part]
        elif get_origin(bare) is dict or bare is dict:
            kinds.append("table")
        elif bare is bool:
            kinds.append("true or false")
            allowed.append("true, false" if allowed else "")
        elif bare is int:
            kinds.append("integer")
        elif bare is float:
            kinds.append("number")
        elif bare is str:
            kinds.append("text")
        elif inspect.isclass(bare) and issubclass(bare, BaseModel):
            kinds.append("table")
        else:
            kinds.append("any")
        if bounds:
            allowed.append(bounds)
    return " or ".join(dict.fromkeys(kinds)), allowed


def _value(value: Any) -> str:
    """A value as it is written in TOML."""
    if isinstance(value, BaseModel):
        return "(table)"
    if isinstance(value, str):
        return f'"{value}"'
    return json.dumps(value)


def _default(field: FieldInfo) -> str:
    if field.is_required():
        return "required"
    default = field.get_default(call_default_factory=True)
    if default is None or default is PydanticUndefined:
        return "(none)"
    if default == {}:
        return "{}"
    return _value(default)


def row(key: str, field: FieldInfo) -> Row:
    kind, allowed = _describe_type(field.annotation)
    allowed += [_bounds(field.metadata)] if _bounds(field.metadata) else []
    optional = NoneType in [_bare(b) for b in _branches(field.annotation)]
    if optional and field.is_required() is False and field.get_default() is None:
        kind += " (optional)"
    return Row(key, kind, _default(field), "; ".join(a for a in allowed if a), field.description)


def _models(annotation: Any) -> list[type[BaseModel]]:
    """Model classes a field's value is read into, in order, without repeats."""
    found = []
    for branch in _branches(annotation):
        bare = _bare(branch)
        if inspect.isclass(bare) and issubclass(bare, BaseModel):
            found.append(bare)
        elif get_origin(bare) is Annotated or get_origin(bare) in (Union, UnionType):
            found += _models(bare)
    return list(dict.fromkeys(found))


def _common_base(models: list[type[BaseModel]]) -> type[BaseModel] | None:
    """The most derived schema class every model derives from, if it has fields of its own."""
    for candidate in models[0].__mro__[1:]:
        if candidate in (StrictModel, BaseModel) or not issubclass(candidate, BaseModel):
            continue
        if all(issubclass(model, candidate) for model in models) and candidate.model_fields:
            return candidate
    return None


def sections(model: type[BaseModel], path: str) -> Iterator[Section]:
    """The table of `model` at `path`, then the tables nested in it."""
    rows = tuple(row(name, field) for name, field in model.model_fields.items())
    yield Section(path, model, rows)
    for name, field in model.model_fields.items():
        if _models(_value_annotation(field.annotation)):
            yield from _nested(name, field, path)


def _value_annotation(annotation: Any) -> Any:
    """The value annotation of tables keyed by names (nested dicts) or of a list of tables,
    else the annotation."""
    bare = _bare(annotation)
    while get_origin(bare) in (dict, list):
        bare = _bare(get_args(bare)[-1])
    return bare


def _nested(name: str, field: FieldInfo, path: str) -> Iterator[Section]:
    child = f"{path}.{name}" if path else name
    bare = _bare(field.annotation)
    for placeholder in ("NAME", "OPTION"):
        if get_origin(bare) is list:
            child += "[]"
            break
        if get_origin(bare) is not dict:
            break
        child += f".{placeholder}"
        bare = _bare(get_args(bare)[1])
    models = _models(_value_annotation(field.annotation))
    if len(models) == 1:
        yield from sections(models[0], child)
        return
    base = _common_base(models)
    if base is not None:
        yield from _shared_then_own(base, models, child)
        return
    for model in models:
        first, *rest = sections(model, child)
        yield Section(first.title, first.model, first.rows, _tag(model))
        yield from rest


def _shared_then_own(
    base: type[BaseModel], models: list[type[BaseModel]], path: str
) -> Iterator[Section]:
    """Kinds that share a base: the base's keys once, then what each kind adds or changes."""
    yield from sections(base, path)
    for model in models:
        extra = {
            name: field
            for name, field in model.model_fields.items()
            if name not in base.model_fields or _default(field) != _default(base.model_fields[name])
        }
        rows = tuple(row(name, field) for name, field in extra.items())
        yield Section(path, model, rows, _tag(model))


def _tag(model: type[BaseModel]) -> str:
    """`source = "synthetic"`: the discriminating key and its values, for a variant's title."""
    for key in ("source", "method", "model"):
        field = model.model_fields.get(key)
        if field is not None and get_origin(_bare(field.annotation)) is Literal:
            values = " | ".join(_value(v) for v in get_args(_bare(field.annotation)))
            return f"{key} = {values}"
    return ""


def suite_sections() -> list[Section]:
    return list(sections(Suite, ""))


def baseline_sections() -> list[Section]:
    return list(sections(BaselineFile, ""))


def _cell(text: str) -> str:
    return text.replace("|", "\\|").replace("\n", " ") or " "


def markdown(parts: list[Section], top: str) -> str:
    """The sections as Markdown: a heading, the class's first docstring line, a table each."""
    lines: list[str] = []
    for section in parts:
        title = f"`[{section.title}]`" if section.title else top
        title += f" with `{section.variant}`" if section.variant else ""
        doc = inspect.getdoc(section.model) or ""
        lines += [f"### {title}", "", doc.split("\n\n")[0].replace("\n", " "), ""]
        if not section.rows:
            lines += ["No keys of its own.", ""]
            continue
        lines += [
            "| key | type | default | allowed | description |",
            "| --- | --- | --- | --- | --- |",
        ]
        for item in section.rows:
            cells = (
                f"`{item.key}`",
                item.kind,
                f"`{item.default}`",
                item.allowed,
                item.description,
            )
            lines.append("| " + " | ".join(_cell(c) for c in cells) + " |")
        lines.append("")
    return "\n".join(lines)


def reference_page() -> str:
    """The whole generated page."""
    return "\n".join(
        [
            "# Suite-file reference",
            "",
            "Generated from the schema (`harness/schema/`) when the documentation is built: "
            "every key a suite file may hold, with its type, default, allowed values and "
            "meaning. `NAME` stands for a contender name. Unknown keys are errors with a "
            "did-you-mean hint; numbers and true/false must be written without quotes.",
            "",
            "## Suite file (TOML)",
            "",
            markdown(suite_sections(), "Top level"),
            "## Baseline file (JSON)",
            "",
            "Written by `heedful baseline`, read by `heedful gate`; checked as strictly as a "
            "suite file.",
            "",
            markdown(baseline_sections(), "Top level of the baseline file"),
        ]
    )

"""Shared base model and the translation of pydantic errors into one-line messages."""

from __future__ import annotations

import difflib
from pathlib import PurePath
from typing import Annotated, Any, ClassVar, Literal, get_args, get_origin

from pydantic import BaseModel, ConfigDict, ValidationError, model_validator

UNKNOWN_KEY = "unknown key"
STRAY_BOOLEAN = "true/false given for"
QUOTED_VALUE = "text given where allowed is"
# numpy's RandomState (node splits) and Optuna's samplers take seeds below 2**32
LARGEST_SEED = 2**32 - 1


class StrictModel(BaseModel):
    """Frozen, and unknown keys are errors with a did-you-mean hint."""

    model_config = ConfigDict(frozen=True, protected_namespaces=())
    # Options added after run keys were first stored: they enter a run key only when they
    # differ from their default, so runs and baselines stored before them keep their keys.
    keyed_when_set: ClassVar[frozenset[str]] = frozenset()
    # values of such options that also stay out of a key, besides the default
    unkeyed_values: ClassVar[dict[str, tuple]] = {}

    @model_validator(mode="before")
    @classmethod
    def _no_unknown_keys(cls, data: Any) -> Any:
        if isinstance(data, dict):
            allowed = list(cls.model_fields)
            for key in data:
                if key not in cls.model_fields:
                    hint = difflib.get_close_matches(str(key), allowed, n=1)
                    maybe = f" (did you mean '{hint[0]}'?)" if hint else ""
                    raise ValueError(
                        f"{UNKNOWN_KEY} '{key}'{maybe}; allowed keys: {', '.join(allowed)}"
                    )
                # pydantic would read true as 1 (seeds = true: one seed); only bool fields take it
                value, field = data[key], cls.model_fields[key]
                if isinstance(value, bool) and not takes_bool(field.annotation):
                    raise ValueError(f"{STRAY_BOOLEAN} {key} {str(value).lower()}")
                # pydantic would read "4" as 4 and "yes" as true: a hand-edited file must say
                # what it means
                expected = quoted_value(value, field.annotation)
                if expected:
                    raise ValueError(f"{QUOTED_VALUE} {expected}: {key}")
        return data


def takes_bool(annotation: Any) -> bool:
    """Whether a field annotation admits true/false (bool, Any, or a union or literal with one)."""
    if annotation is bool or annotation is Any or isinstance(annotation, bool):
        return True
    return any(takes_bool(argument) for argument in get_args(annotation))


def _branches(annotation: Any) -> tuple[Any, ...]:
    """The alternatives of a union (Annotated unwrapped), or the annotation alone."""
    if get_origin(annotation) is Annotated:
        return _branches(get_args(annotation)[0])
    if get_origin(annotation) is None or get_origin(annotation) is Literal:
        return (annotation,)
    if get_origin(annotation) in (list, tuple, set, frozenset, dict):
        return (annotation,)
    return tuple(b for argument in get_args(annotation) for b in _branches(argument))


def _takes_text(branch: Any) -> bool:
    if get_origin(branch) is Literal:
        return any(isinstance(value, str) for value in get_args(branch))
    return branch in (str, Any) or (isinstance(branch, type) and issubclass(branch, PurePath))


def quoted_value(value: Any, annotation: Any) -> str | None:
    """What is allowed, when `value` is text (or a list holding text) where only numbers or
    true/false are; else None."""
    branches = _branches(annotation)
    if isinstance(value, str) and not any(_takes_text(b) for b in branches):
        if any(b in (int, float) for b in branches):
            return "a number"
        if bool in branches:
            return "true or false"
        return None
    if isinstance(value, list):
        items = [get_args(b)[0] for b in branches if get_origin(b) is list and get_args(b)]
        for item in value:
            for kind in items[:1]:
                if expected := quoted_value(item, kind):
                    return expected
    return None


def key_path(loc: tuple, raw: Any, missing: bool = False) -> str:
    """Dotted key path of a pydantic error location, without pydantic's union-branch tags."""
    path: list[str] = []
    data = raw
    for index, part in enumerate(loc):
        if isinstance(data, dict) and part in data:
            path.append(str(part))
            data = data[part]
        elif isinstance(data, list) and isinstance(part, int) and part < len(data):
            path.append(str(part))
            data = data[part]
        elif missing and index == len(loc) - 1 and isinstance(data, dict):
            path.append(str(part))  # a required key that is missing
        # anything else is a tag pydantic adds for a union branch
    return ".".join(path) or "(top level)"


def format_validation_error(error: ValidationError, raw: Any, source: str) -> str:
    """First error of a validation as one line: `source: key.path: given X; what is allowed`."""
    first = error.errors(include_url=False)[0]
    where = key_path(tuple(first["loc"]), raw, missing=first["type"] == "missing")
    if first["type"] == "missing":
        return f"{source}: {where}: required key is missing"
    message = first["msg"].removeprefix("Value error, ")
    if message.startswith(UNKNOWN_KEY):
        return f"{source}: {where}: {message}"
    if message.startswith(STRAY_BOOLEAN):
        key, value = message.split()[-2:]
        where = key if where == "(top level)" else f"{where}.{key}"
        return f"{source}: {where}: given {value}; allowed: a number or text, not true or false"
    if message.startswith(QUOTED_VALUE):
        expected, key = message.removeprefix(QUOTED_VALUE + " ").rsplit(": ", 1)
        where = key if where == "(top level)" else f"{where}.{key}"
        value = raw_value(raw, where)
        return f"{source}: {where}: given {show(value)} (text); allowed: {expected}, without quotes"
    if first["type"] == "union_tag_not_found":
        tag = first.get("ctx", {}).get("discriminator", "the kind")
        return f"{source}: {where}: required key {tag} is missing"
    if first["type"] == "union_tag_invalid":
        return f"{source}: {where}: {message}"
    if first["type"] == "value_error" and isinstance(first.get("input"), dict):
        return f"{source}: {where}: {message}"  # a check across keys; the message names them
    return f"{source}: {where}: given {show(first.get('input'))}; {message}"


def raw_value(raw: Any, dotted: str) -> Any:
    """The value at a dotted key path of raw input (None where the path ends early)."""
    for part in dotted.split("."):
        if isinstance(raw, dict) and part in raw:
            raw = raw[part]
        elif isinstance(raw, list) and part.isdigit() and int(part) < len(raw):
            raw = raw[int(part)]
        else:
            return None
    return raw


def show(value: Any) -> str:
    """A short repr of a given value for error messages."""
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


def key_dump(model: BaseModel, exclude: set[str] | None = None) -> Any:
    """JSON form of a model for run keys: every field, except `keyed_when_set` fields that
    hold their default (recursively, through nested models and lists)."""
    return _key_value(model, exclude or set())


def _key_value(value: Any, exclude: set[str]) -> Any:
    if isinstance(value, BaseModel):
        late = getattr(value, "keyed_when_set", frozenset())
        unkeyed = getattr(value, "unkeyed_values", {})
        dumped = value.model_dump(mode="json", exclude=exclude or None)
        for name, field in type(value).model_fields.items():
            if name in exclude:
                continue
            item = getattr(value, name)
            default = field.get_default(call_default_factory=True)
            if name in late and (item == default or _among(item, unkeyed.get(name, ()))):
                dumped.pop(name, None)
            elif isinstance(item, (BaseModel, list, tuple)):
                dumped[name] = _key_value(item, set())
        return dumped
    if isinstance(value, (list, tuple)) and any(isinstance(v, BaseModel) for v in value):
        return [_key_value(v, set()) for v in value]
    return value


def _among(item: Any, values: tuple) -> bool:
    """Membership that tells true from 1 and false from 0."""
    return any(type(item) is type(value) and item == value for value in values)

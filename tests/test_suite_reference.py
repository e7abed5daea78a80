"""The suite-file reference generated from the schema: every field described and listed."""

from __future__ import annotations

import importlib
import inspect
import pkgutil

import pytest
from pydantic import BaseModel, Field

import harness.schema
from harness.schema.reference import (
    baseline_sections,
    reference_page,
    suite_sections,
)
from harness.schema.suite import Suite


def schema_models() -> list[type[BaseModel]]:
    """Every pydantic model class defined in harness/schema/ and its subpackages."""
    found = []
    for module_info in pkgutil.walk_packages(harness.schema.__path__, "harness.schema."):
        module = importlib.import_module(module_info.name)
        for _, value in inspect.getmembers(module, inspect.isclass):
            if issubclass(value, BaseModel) and value.__module__ == module.__name__:
                found.append(value)
    return found


def undescribed(models: list[type[BaseModel]]) -> list[str]:
    """Fields of the models without a description, as module.Class.field."""
    return [
        f"{model.__module__}.{model.__name__}.{name}"
        for model in models
        for name, field in model.model_fields.items()
        if not (field.description or "").strip()
    ]


def test_every_schema_field_has_a_description() -> None:
    models = schema_models()
    assert len(models) > 20  # the walk found the schema, not an empty package
    assert undescribed(models) == []


def test_a_field_without_a_description_is_reported() -> None:
    class Sketch(BaseModel):
        described: int = Field(1, description="A count.")
        bare: int = 2
        blank: str = Field("", description="  ")

    assert undescribed([Sketch]) == [f"{__name__}.Sketch.bare", f"{__name__}.Sketch.blank"]


def test_the_reference_lists_every_schema_field() -> None:
    listed = {
        (section.model, row.key)
        for section in suite_sections() + baseline_sections()
        for row in section.rows
    }

    def covered(model: type[BaseModel], name: str) -> bool:
        """Listed under the model, a base that has the field, or a model built on it (the
        suite's sections are listed under `Suite`, which adds the tasks' own tables)."""
        return any(
            key == name
            and (issubclass(model, owner) or issubclass(owner, model))
            and name in owner.model_fields
            for owner, key in listed
        )

    unlisted = [
        f"{model.__name__}.{name}"
        for model in schema_models()
        for name in model.model_fields
        if not covered(model, name)
    ]
    assert unlisted == []


@pytest.mark.parametrize("name", ["seeds", "metric", "setting", "description"])
def test_top_level_rows_agree_with_pydantics_own_json_schema(name: str) -> None:
    """Defaults and descriptions match pydantic's JSON Schema generator (an outside view of
    the same models, pydantic's `model_json_schema`)."""
    properties = Suite.model_json_schema()["properties"]
    top = next(section for section in suite_sections() if section.title == "")
    row = next(row for row in top.rows if row.key == name)
    assert row.description == properties[name]["description"]
    default = properties[name]["default"]
    assert row.default == (f'"{default}"' if isinstance(default, str) else str(default))


def test_the_page_shows_defaults_and_allowed_values() -> None:
    page = reference_page()
    assert '| `activation` | text | `"elu"` | "relu", "elu", "gelu", "leaky_relu", "tanh" |' in page
    assert "| `patience` | integer | `50` | 1 to 100 000 |" in page
    assert '### `[data]` with `source = "tables"`' in page
    assert '### `[contenders.NAME]` with `model = "gat" | "gatv2" | "dot_product"`' in page
    assert "| `hidden` | integer | `8` |" in page  # the attention kinds' own default
    assert "| `class_balance` |" in page and "| `description` |" in page

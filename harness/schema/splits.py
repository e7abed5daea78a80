"""The split section, and the homophily map: how a suite's labelled nodes are split (chosen by
`method`, default "fractions"), and the synthetic graphs matched to its data.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

from pydantic import Discriminator, Field, Tag, field_validator, model_validator

from harness.schema.base import StrictModel


class Shares(StrictModel):
    """A split by shares of `train`, `validation` and `test` (declared by each method), which
    together may not pass 1."""

    @model_validator(mode="after")
    def _sums_to_at_most_one(self) -> Shares:
        total = self.train + self.validation + self.test
        if total > 1 + 1e-9:
            raise ValueError(f"train + validation + test = {total:g}; allowed: at most 1")
        return self


class FractionSplit(Shares):
    """Stratified random split by fractions, drawn anew for each seed."""

    method: Literal["fractions"] = Field(
        "fractions",
        description=(
            "fractions: stratified random shares of the labelled nodes, drawn anew per seed."
        ),
    )
    train: float = Field(0.5, gt=0, lt=1, description="Share of the labelled nodes for training.")
    validation: float = Field(
        0.25,
        gt=0,
        lt=1,
        description="Share for validation (early stopping, tuning).",
    )
    test: float = Field(
        0.25,
        gt=0,
        lt=1,
        description=(
            "Share for test; train + validation + test at most 1 (exactly 1 for link prediction)."
        ),
    )


class ScaffoldSplit(Shares):
    """Molecules grouped by Bemis-Murcko scaffold (Bemis and Murcko, 1996); groups drawn in a
    random order per seed fill train, then validation, then test: no scaffold in two parts."""

    method: Literal["scaffold"] = Field("scaffold", description="Split molecules by scaffold.")
    train: float = Field(0.8, gt=0, lt=1, description="Share of molecules for training.")
    validation: float = Field(0.1, gt=0, lt=1, description="Share for validation.")
    test: float = Field(0.1, gt=0, lt=1, description="Share for testing.")


class SizeSplit(Shares):
    """Train on smaller graphs, test on larger: the largest `test` share (by node count) is
    the test part; the rest is split at random per seed into train and validation."""

    method: Literal["size"] = Field("size", description="Test on the largest graphs.")
    train: float = Field(0.6, gt=0, lt=1, description="Share of graphs for training.")
    validation: float = Field(0.2, gt=0, lt=1, description="Share for validation.")
    test: float = Field(0.2, gt=0, lt=1, description="Share of the largest graphs for testing.")


class PerClassSplit(StrictModel):
    """A fixed number of labelled nodes per class for training and validation, drawn per seed.

    Test: `test_per_class` nodes per class, or every remaining labelled node when absent.
    """

    method: Literal["per_class"] = Field(
        description="per_class: a fixed number of labelled nodes of each class.",
    )
    train_per_class: int = Field(20, ge=1, le=1_000_000, description="Training nodes per class.")
    validation_per_class: int = Field(
        30,
        ge=1,
        le=1_000_000,
        description="Validation nodes per class.",
    )
    test_per_class: int | None = Field(
        None,
        ge=1,
        le=1_000_000,
        description="Test nodes per class; default: every remaining labelled node.",
    )


class ColumnSplit(StrictModel):
    """The split the data carries: a table's split column, or a PyG dataset's masks.

    When a PyG dataset holds several mask columns, seed s uses column s mod their count.
    """

    method: Literal["column"] = Field(
        description=(
            "column: the split the data carries (a table's split column, a PyG dataset's masks)."
        ),
    )


def _split_method(value: Any) -> str:
    if isinstance(value, dict):
        return value.get("method", "fractions")
    return getattr(value, "method", "fractions")


SplitSection = Annotated[
    Annotated[FractionSplit, Tag("fractions")]
    | Annotated[PerClassSplit, Tag("per_class")]
    | Annotated[ColumnSplit, Tag("column")]
    | Annotated[ScaffoldSplit, Tag("scaffold")]
    | Annotated[SizeSplit, Tag("size")],
    Discriminator(
        _split_method,
        custom_error_type="unknown_split_method",
        custom_error_message=(
            "unknown split method; allowed: fractions, per_class, column, scaffold, size"
        ),
    ),
]


class HomophilyMap(StrictModel):
    """Run the contenders on synthetic graphs matched to the suite's data (nodes, average
    degree, classes and their balance, feature width) at each edge homophily in `levels`."""

    levels: list[float] = Field(
        [0.1, 0.3, 0.5, 0.7, 0.9],
        description=(
            "Edge homophily of each synthetic graph: two or more distinct values from 0 to 1."
        ),
    )
    seeds: int = Field(2, ge=1, le=100, description="Seeds per level and contender.")
    feature_signal: float = Field(
        1.0,
        ge=0,
        le=100,
        description="Feature signal of the synthetic graphs (as in the synthetic source).",
    )
    graph_seed: int = Field(0, ge=0, description="Seed of the synthetic graphs.")

    @field_validator("levels")
    @classmethod
    def _levels_in_range(cls, levels: list[float]) -> list[float]:
        if len(levels) < 2 or len(set(levels)) != len(levels):
            raise ValueError("allowed: two or more distinct edge homophily values")
        if any(not 0 <= level <= 1 for level in levels):
            raise ValueError("allowed: edge homophily values from 0 to 1")
        return sorted(levels)

"""The data section: where the graph comes from. One class per source, chosen by `source`."""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field, model_validator

from harness.schema.base import StrictModel


class SyntheticData(StrictModel):
    """Contextual stochastic block model: planted classes, homophilous edges, Gaussian features."""

    source: Literal["synthetic"]
    nodes: int = Field(1000, ge=4, le=2_000_000)
    classes: int = Field(4, ge=2, le=100)
    average_degree: float = Field(8.0, gt=0, le=1000)
    edge_homophily: float = Field(0.7, ge=0, le=1)
    feature_dimension: int = Field(16, ge=1, le=10_000)
    feature_signal: float = Field(1.0, ge=0, le=100)
    class_balance: list[float] | None = None
    graph_seed: int = Field(0, ge=0)

    @model_validator(mode="after")
    def _balance_matches_classes(self) -> SyntheticData:
        balance = self.class_balance
        if balance is not None:
            if len(balance) != self.classes:
                raise ValueError(
                    f"class_balance has {len(balance)} entries; allowed: one per class "
                    f"({self.classes})"
                )
            if any(b <= 0 for b in balance):
                raise ValueError("class_balance entries must all be > 0")
        weights = balance or [1.0] * self.classes
        shares = [w / sum(weights) for w in weights]
        smallest = min(range(self.classes), key=shares.__getitem__)
        if shares[smallest] * self.nodes < 1:  # an empty class breaks sampling and splitting
            raise ValueError(
                f"class {smallest} gets {shares[smallest] * self.nodes:.2g} of {self.nodes} "
                "nodes; allowed: nodes and class_balance that give every class at least one node"
            )
        if self.average_degree >= self.nodes - 1:
            raise ValueError(f"average_degree must be below nodes - 1 ({self.nodes - 1})")
        return self


DataSection = Annotated[SyntheticData, Field(discriminator="source")]


class FractionSplit(StrictModel):
    """Stratified random split by fractions, drawn anew for each seed."""

    method: Literal["fractions"] = "fractions"
    train: float = Field(0.5, gt=0, lt=1)
    validation: float = Field(0.25, gt=0, lt=1)
    test: float = Field(0.25, gt=0, lt=1)

    @model_validator(mode="after")
    def _sums_to_at_most_one(self) -> FractionSplit:
        total = self.train + self.validation + self.test
        if total > 1 + 1e-9:
            raise ValueError(f"train + validation + test = {total:g}; allowed: at most 1")
        return self


SplitSection = FractionSplit

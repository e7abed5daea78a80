"""The `[analysis]` table of a suite: how stored runs are judged."""

from __future__ import annotations

from pydantic import Field, field_validator, model_validator

from harness.schema.base import StrictModel

# settings of the per-node breakdown, refused for a task that has none
BREAKDOWN_KEYS = ("local_homophily_edges", "degree_edges", "breakdown")


class Analysis(StrictModel):
    """Settings of the statistics and verdicts.

    `minimum_gain` is the smallest difference that matters, in metric points (one point is
    0.01 of a metric that runs from 0 to 1). `attention` and `baselines` name the contenders
    of each side of the paired comparisons; left empty, attention model kinds form one side
    and all other contenders the other. `breakdown = false` keeps no per-node predictions
    for new runs and leaves the per-node breakdown out (for graphs with very many test nodes).
    """

    minimum_gain: float = Field(
        1.0,
        ge=0,
        le=100,
        description="Smallest difference that matters, in metric points (0.01 of the metric).",
    )
    confidence: float = Field(
        0.95,
        ge=0.5,
        le=0.999,
        description="Confidence of every interval; 1 - confidence is the level of the tests.",
    )
    bootstrap_resamples: int = Field(
        2000,
        ge=100,
        le=100_000,
        description="Resamples of the percentile bootstrap intervals.",
    )
    attention: list[str] = Field(
        [],
        description=(
            "Contenders on the attention side of the comparisons; default: the "
            "attention model kinds."
        ),
    )
    baselines: list[str] = Field(
        [],
        description=(
            "Contenders on the baseline side; default: every contender not on the attention side."
        ),
    )
    local_homophily_edges: list[float] = Field(
        [0.0, 0.2, 0.4, 0.6, 0.8, 1.0],
        description=("Bin edges of the per-node breakdown by local homophily, rising from 0 to 1."),
    )
    degree_edges: list[int] = Field(
        [],
        description=(
            "Lowest degree of each degree group but the first, rising; empty: the "
            "quartiles of the degrees."
        ),
    )
    breakdown: bool = Field(
        True,
        description=(
            "Keep test-node predictions of new runs and make the per-node breakdown; "
            "false for graphs with very many test nodes."
        ),
    )

    @field_validator("local_homophily_edges")
    @classmethod
    def _bins_cover_zero_to_one(cls, edges: list[float]) -> list[float]:
        rising = all(low < high for low, high in zip(edges, edges[1:], strict=False))
        if len(edges) < 2 or edges[0] != 0 or edges[-1] != 1 or not rising:
            raise ValueError("allowed: rising bin edges from 0 to 1, e.g. [0, 0.5, 1]")
        return edges

    @field_validator("degree_edges")
    @classmethod
    def _degree_edges_rise(cls, edges: list[int]) -> list[int]:
        rising = all(low < high for low, high in zip(edges, edges[1:], strict=False))
        if any(edge < 1 for edge in edges) or not rising:
            raise ValueError("allowed: rising degrees of at least 1, e.g. [3, 6, 12], or []")
        return edges

    @model_validator(mode="after")
    def _sides_do_not_overlap(self) -> Analysis:
        both = sorted(set(self.attention) & set(self.baselines))
        if both:
            raise ValueError(
                f"{', '.join(both)} named in both attention and baselines; allowed: each "
                "contender on one side"
            )
        return self


DEFAULT_ANALYSIS = Analysis()


def unknown_contenders(analysis: Analysis, contenders: list[str]) -> str | None:
    """A one-line complaint when `attention` or `baselines` names a contender the suite lacks."""
    for side in ("attention", "baselines"):
        missing = [name for name in getattr(analysis, side) if name not in contenders]
        if missing:
            return (
                f"{side} names {', '.join(repr(m) for m in missing)}, not a contender; "
                f"allowed: {', '.join(contenders)}"
            )
    return None

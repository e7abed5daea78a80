"""Link prediction: which node pairs are edges; metrics roc_auc, average_precision, hits_at_k.

Its own suite table is `[link]` (LinkOptions). Splits are shares of the edges (of the nodes when
inductive) and must cover all of them; node labels, and so the homophily map and the per-node
breakdown, play no part.
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field

from harness.schema.base import StrictModel
from harness.schema.splits import SplitSection
from harness.schema.tasks.declaration import Metric, TaskKind


class LinkOptions(StrictModel):
    """How a link suite scores node pairs and draws its negatives.

    Every contender is the encoder of node embeddings `embedding_width` wide; the decoder scores
    a pair (i, j) from them: `dot_product` s_ij = h_i . h_j, or `mlp` s_ij = MLP(h_i * h_j)
    (one hidden layer `decoder_hidden` wide). `negatives_per_positive` non-edges are drawn per
    validation and test edge, once per seed (the same for every contender), and per training
    edge afresh each epoch. Hits@K counts test edges ranked above the K-th best negative.
    `validation_edges_at_test`: the test scores pass messages over the validation edges too.
    """

    decoder: Literal["dot_product", "mlp"] = Field(
        "dot_product",
        description=(
            "How a node pair is scored from its embeddings: dot_product (h_i . h_j) "
            "or mlp (an MLP of h_i * h_j)."
        ),
    )
    decoder_hidden: int = Field(
        32,
        ge=1,
        le=4096,
        description="Width of the mlp decoder's hidden layer.",
    )
    embedding_width: int = Field(
        32,
        ge=1,
        le=4096,
        description="Width of the node embeddings every encoder outputs.",
    )
    negatives_per_positive: int = Field(
        1,
        ge=1,
        le=1000,
        description="Sampled non-edges per validation, test and training edge.",
    )
    hits_k: int = Field(50, ge=1, le=100_000, description="K of the hits_at_k metric.")
    validation_edges_at_test: bool = Field(
        False,
        description="Test scores pass messages over the validation edges too.",
    )

    def saved_floats_per_pair(self) -> int:
        """Floats a scored pair keeps for backward: both ends' embeddings and the logit; the mlp
        decoder also its input (their product) and hidden layer."""
        width, hidden = self.embedding_width, self.decoder_hidden
        return 3 * width + 2 * hidden + 2 if self.decoder == "mlp" else 2 * width + 2


def shares_cover_the_edges(split: SplitSection) -> str | None:
    """Shares of the edges must sum to 1: every edge is trained on, validated or tested."""
    total = split.train + split.validation + split.test
    if abs(total - 1) > 1e-9:
        return (
            f"train + validation + test = {total:g}; allowed for link prediction: shares "
            "of the edges (of the nodes when inductive) that sum to 1"
        )
    return None


SCORES = "harness.schema.tasks.link_scores"

LINK_PREDICTION = TaskKind(
    title="link prediction",
    summary="which node pairs are edges",
    metrics=(
        Metric("roc_auc", "ROC-AUC", f"{SCORES}:roc_auc", f"{SCORES}:rank_roc_auc"),
        Metric(
            "average_precision",
            "average precision",
            f"{SCORES}:average_precision",
            f"{SCORES}:threshold_average_precision",
        ),
        Metric("hits_at_k", "Hits@K", f"{SCORES}:hits_at_k"),
    ),
    default_metric="roc_auc",
    objective="link_loss",
    data_check="harness.execution.preflight:check_edge_splits",
    split_methods=("fractions",),
    refused={
        "homophily_map": "the homophily map varies node labels, which link prediction does not use"
    },
    section_checks={"split": shares_cover_the_edges},
    options_section="link",
    options=LinkOptions,
    output_option="embedding_width",
    run_memory="harness.execution.memory:scored_pair_bytes",
    sampled_batches=False,
    compiles=False,
    no_compile_reason="link prediction trains eagerly: compiling is not extended to it",
    breakdown=False,
    node_labels=False,
)

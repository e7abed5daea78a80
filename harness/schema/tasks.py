"""Tasks a suite can pose, with the metrics each defines, and the `[link]` table of link suites.

node_classification  one class per node; metrics accuracy, macro_f1, roc_auc (one-vs-rest)
link_prediction      which node pairs are edges; metrics roc_auc, average_precision, hits_at_k
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field

from harness.schema.base import StrictModel

Task = Literal["node_classification", "link_prediction"]
DEFAULT_TASK = "node_classification"

# the metrics each task defines; the first is the task's default `metric`
TASK_METRICS: dict[str, tuple[str, ...]] = {
    "node_classification": ("accuracy", "macro_f1", "roc_auc"),
    "link_prediction": ("roc_auc", "average_precision", "hits_at_k"),
}
# suite parts the link task does not extend to: refused rather than silently ignored
NOT_FOR_LINKS = {
    "homophily_map": "the homophily map varies node labels, which link prediction does not use",
}


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

"""Options of each model kind; harness/schema/model_kinds.py registers each kind with its class."""

from __future__ import annotations

from typing import Annotated, Any, ClassVar, Literal, get_args

from pydantic import Field, model_validator

from harness.schema.base import UNKNOWN_KEY, StrictModel
from harness.schema.training import TrainingOverride

Activation = Literal["relu", "elu", "gelu", "leaky_relu", "tanh"]
HeadMerge = Literal["concatenate", "average"]
Readout = Literal["mean", "sum", "max", "attention"]
HeadCount = Annotated[int, Field(ge=1, le=16)]
FeatureStart = Literal[
    "given",
    "identity",
    "degree",
    "log_degree",
    "random",
    "constant",
    "given_degree",
    "laplacian",
    "random_walk",
]

# options only an attention layer has; on any other kind they are errors, not silently ignored
ATTENTION_ONLY = (
    "heads",
    "head_merge",
    "hop_radius",
    "attend_to_self",
    "negative_slope",
    "attention_dropout",
    "residual",
    "edge_features",
)
# widest hidden layer (heads x width per head) a suite may ask for
MAX_LAYER_WIDTH = 1024


class ContenderBase(StrictModel):
    """Options every contender has, including the node features it starts from.

    `start_width` is the embedding width of `identity`, the dimension of `random`, the number
    of Laplacian eigenvectors of `laplacian` and the number of walk steps of `random_walk`;
    `degree_cap` caps the one-hot degree of `degree` and `given_degree`.
    """

    layers: int = Field(2, ge=1, le=8, description="Number of layers, the output layer included.")
    hidden: int = Field(
        64,
        ge=1,
        le=4096,
        description="Width of each hidden layer (attention kinds: the width of each head).",
    )
    dropout: float = Field(0.5, ge=0, lt=1, description="Dropout on each layer's input.")
    activation: Activation = Field("elu", description="Activation between layers.")
    feature_start: FeatureStart = Field(
        "given",
        description=(
            "The node features a contender starts from: given (the data's), identity "
            "(a learned row per node; transductive only), degree (one-hot, capped), "
            "log_degree, random (fixed Gaussian columns), constant, given_degree "
            "(given plus the degree one-hot), laplacian (eigenvectors) or random_walk"
            " (return probabilities)."
        ),
    )
    start_width: int = Field(
        16,
        ge=1,
        le=1024,
        description=(
            "Width of identity and random starts, the number of Laplacian "
            "eigenvectors, or the random-walk steps."
        ),
    )
    degree_cap: int = Field(
        32,
        ge=1,
        le=10_000,
        description=("Largest degree with its own column in the degree and given_degree one-hots."),
    )
    readout: Readout = Field(
        "mean",
        description=(
            "Graph classification only: how a graph's node states pool into one: mean, sum, "
            "max, or attention (gated attention pooling, Li et al. 2016)."
        ),
    )
    training: TrainingOverride = Field(
        TrainingOverride(),
        description="This contender's changes to the suite's training defaults.",
    )

    # added with graph classification: node and link runs keep their keys
    keyed_when_set: ClassVar[frozenset[str]] = frozenset({"readout"})

    @model_validator(mode="before")
    @classmethod
    def _attention_options_need_attention(cls, data: Any) -> Any:
        if isinstance(data, dict) and "heads" not in cls.model_fields:
            for key in ATTENTION_ONLY:
                if key in data:
                    raise ValueError(
                        f"{UNKNOWN_KEY} '{key}' for model {data.get('model')!r}: it has no "
                        f"attention; allowed only for {', '.join(_attention_kinds())}"
                    )
        return data

    # what every kind's layers declare, so that no stage asks which kind it holds
    def edge_attribute_use(self) -> str:
        """Whether its layers read edge attributes: "none", "required" (the data must have
        them), or "optional" (a constant column of ones stands in when the data has none)."""
        return "none"

    def attended_pairs(self, nodes: float) -> float:
        """Node pairs (times heads) one layer scores with full attention over all nodes."""
        return 0.0

    def extra_floats_per_node(self) -> float:
        """Floats per node and layer autograd saves beyond what its kind declares (an option
        that changes the layer's inner make-up); for the memory estimate."""
        return 0.0

    def layer_radius(self) -> int:
        """Hops one layer reaches: 1, but for kinds that attend over a wider hop set."""
        return 1

    def heads_per_layer(self) -> list[int]:
        return [1] * self.layers

    def merge_per_layer(self) -> list[str]:
        """How each layer merges its heads; one head gives the same either way."""
        return ["average"] * self.layers


def _attention_kinds() -> tuple[str, ...]:
    """The kinds AttentionOptions and its subclasses serve (their `model` literals)."""
    classes = (AttentionOptions, *AttentionOptions.__subclasses__())
    return tuple(name for c in classes for name in get_args(c.model_fields["model"].annotation))


class AttentionOptions(ContenderBase):
    """Graph attention: `hidden` is the width of each head.

    `heads` and `head_merge` take one value or a list with one entry per layer. One
    `head_merge` value applies to the hidden layers; the output layer then averages its heads,
    as in Velickovic et al. (2018). `hop_radius` k lets a node attend to every node within k
    hops, and to itself when `attend_to_self`. `negative_slope` is the LeakyReLU slope of the
    static and dynamic scores; scaled dot-product scores have none.
    """

    model: Literal["gat", "gatv2", "dot_product"] = Field(
        description=(
            "Attention scoring: gat (static, Velickovic et al. 2018), gatv2 (dynamic,"
            " Brody et al. 2022) or dot_product (scaled dot product, Shi et al. "
            "2021)."
        ),
    )
    hidden: int = Field(8, ge=1, le=4096, description="Width of each attention head.")
    heads: HeadCount | list[HeadCount] = Field(
        8,
        description="Attention heads, one count for every layer or a list with one per layer.",
    )
    head_merge: HeadMerge | list[HeadMerge] = Field(
        "concatenate",
        description=(
            "How heads combine: one value sets the hidden layers (the output layer "
            "averages), or a list sets every layer."
        ),
    )
    hop_radius: int = Field(
        1,
        ge=1,
        le=3,
        description="A node attends to every node within this many hops.",
    )
    attend_to_self: bool = Field(True, description="Whether a node attends to itself.")
    negative_slope: float = Field(
        0.2,
        ge=0,
        lt=1,
        description="LeakyReLU slope of the gat and gatv2 scores.",
    )
    attention_dropout: float = Field(
        0.0,
        ge=0,
        lt=1,
        description="Dropout on the attention weights.",
    )
    residual: bool = Field(False, description="Add a linear skip connection to each layer.")
    edge_features: bool = Field(
        False,
        description=(
            "Score and weigh messages with the data's edge attributes too (PyG's edge_dim); "
            "self-loops get the mean of a node's incoming attributes. Needs hop_radius 1."
        ),
    )

    keyed_when_set: ClassVar[frozenset[str]] = ContenderBase.keyed_when_set | {"edge_features"}

    @model_validator(mode="after")
    def _layer_shapes(self) -> AttentionOptions:
        if self.edge_features and self.hop_radius > 1:
            raise ValueError(
                f"edge_features = true with hop_radius {self.hop_radius}: edges beyond one hop "
                "have no attributes; allowed: edge_features with hop_radius 1"
            )
        for name in ("heads", "head_merge"):
            value = getattr(self, name)
            if isinstance(value, list) and len(value) != self.layers:
                raise ValueError(
                    f"{name} lists {len(value)} layers; allowed: one value, or a list with one "
                    f"entry per layer ({self.layers})"
                )
        heads, merges = self.heads_per_layer(), self.merge_per_layer()
        for index in range(self.layers - 1):
            width = heads[index] * self.hidden if merges[index] == "concatenate" else self.hidden
            if width > MAX_LAYER_WIDTH:
                raise ValueError(
                    f"layer {index + 1} is heads x hidden = {heads[index]} x {self.hidden} = "
                    f"{width} wide; allowed: at most {MAX_LAYER_WIDTH}"
                )
        return self

    def layer_radius(self) -> int:
        return self.hop_radius

    def edge_attribute_use(self) -> str:
        return "required" if self.edge_features else "none"

    def heads_per_layer(self) -> list[int]:
        return list(self.heads) if isinstance(self.heads, list) else [self.heads] * self.layers

    def merge_per_layer(self) -> list[str]:
        """Velickovic et al. (2018) defaults: one value sets hidden layers, output averages."""
        if isinstance(self.head_merge, list):
            return list(self.head_merge)
        return [self.head_merge] * (self.layers - 1) + ["average"]


class TransformerOptions(AttentionOptions):
    """The graph transformer layer of Shi et al. (2021): scaled dot-product attention over
    neighbours, edge attributes (with `edge_features`) in keys and values, and a gated skip
    connection from each node's own features, which is always on."""

    model: Literal["transformer"] = Field(
        description=(
            "transformer: the graph transformer layer (Shi et al. 2021, PyG's TransformerConv "
            "with its gated skip connection)."
        ),
    )
    residual: Literal[True] = Field(
        True,
        description="The gated skip connection: always on for transformer layers.",
    )


class ConvolutionOptions(ContenderBase):
    """Graph convolution with symmetric normalisation (Kipf and Welling, 2017)."""

    model: Literal["gcn"] = Field(
        description=(
            "gcn: graph convolution with symmetric normalisation (Kipf and Welling, 2017)."
        ),
    )


class NeighbourMeanOptions(ContenderBase):
    """Mean aggregation over neighbours plus a root weight (Hamilton et al., 2017)."""

    model: Literal["sage"] = Field(
        description=(
            "sage: the mean of the neighbours plus a root weight (Hamilton et al., 2017)."
        ),
    )


class MLPOptions(ContenderBase):
    """Multi-layer perceptron on node features alone: ignores edges."""

    model: Literal["mlp"] = Field(
        description="mlp: a multi-layer perceptron on node features alone; ignores edges.",
    )


class IsomorphismOptions(ContenderBase):
    """Graph isomorphism network (Xu et al., 2019): h' = MLP((1 + eps) h + sum of neighbours)."""

    model: Literal["gin"] = Field(
        description=(
            "gin: the graph isomorphism network (Xu et al., 2019), a sum of the neighbours "
            "through a two-layer MLP."
        ),
    )
    learn_self_weight: bool = Field(
        False,
        description="Learn the weight 1 + epsilon of a node's own state (GIN-epsilon); false: 1.",
    )


class EdgeConvolutionOptions(IsomorphismOptions):
    """Graph isomorphism convolution over edge attributes (Hu et al., 2020)."""

    model: Literal["gine"] = Field(
        description=(
            "gine: sums ReLU(h_j + W e_ji) over neighbours, then an MLP (Hu et al., 2020, "
            "PyG's GINEConv); without edge attributes in the data, e_ji is a constant 1."
        ),
    )

    def edge_attribute_use(self) -> str:
        return "optional"


PERFORMER_FLOATS_PER_HEAD = 1230


class GlobalAttentionOptions(ContenderBase):
    """A local message-passing layer plus attention over all nodes of the graph (Rampasek et
    al., 2022): `hidden` is the width of every layer, split over `heads`."""

    model: Literal["global_attention"] = Field(
        description=(
            "global_attention: GINE message passing plus multi-head attention over all nodes, "
            "summed (Rampasek et al. 2022, PyG's GPSConv); pair it with feature_start "
            "laplacian or random_walk for positional starts."
        ),
    )
    heads: HeadCount = Field(4, description="Heads of the attention over all nodes.")
    attention_kind: Literal["multihead", "performer"] = Field(
        "multihead",
        description=(
            "multihead: full softmax attention, memory growing with nodes squared; performer:"
            " linear attention through random features (Choromanski et al., 2021)."
        ),
    )
    attention_dropout: float = Field(
        0.0, ge=0, lt=1, description="Dropout on each layer's local and global outputs."
    )

    @model_validator(mode="after")
    def _width_splits_over_heads(self) -> GlobalAttentionOptions:
        if self.hidden % self.heads:
            raise ValueError(
                f"hidden = {self.hidden} does not split over heads = {self.heads}; allowed: "
                "a hidden width divisible by heads"
            )
        return self

    def edge_attribute_use(self) -> str:
        return "optional"

    def attended_pairs(self, nodes: float) -> float:
        return self.heads * nodes * nodes if self.attention_kind == "multihead" else 0.0

    def extra_floats_per_node(self) -> float:
        # the performer's random-feature maps of queries and keys, per head (PyG's 64 channels
        # per head, 266 features); measured in tests/test_memory.py
        return PERFORMER_FLOATS_PER_HEAD * self.heads if self.attention_kind == "performer" else 0.0

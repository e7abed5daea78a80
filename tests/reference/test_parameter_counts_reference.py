"""Parameter counts used by equal-parameter mode, against the layer formulas of the papers."""

from __future__ import annotations

from harness.schema.contenders import AttentionOptions, ConvolutionOptions, MLPOptions
from harness.tuning.sizing import parameter_count


def test_parameter_counts_follow_the_layer_formulas():
    """Two-layer GCN and MLP: a weight matrix and a bias per layer,
    (d*h + h) + (h*c + c) (Kipf and Welling, 2017; PyG GCNConv adds the bias).
    Two-layer GAT (Velickovic et al., 2018): per layer W (d x K*h), attention vectors a_src and
    a_dst (K*h each) and a bias of K*h (concatenated) or c (averaged output)."""
    d, h, c, k = 6, 10, 3, 2
    dense = (d * h + h) + (h * c + c)
    assert parameter_count(ConvolutionOptions(model="gcn", hidden=h), d, c) == dense
    assert parameter_count(MLPOptions(model="mlp", hidden=h), d, c) == dense
    first = d * k * h + 2 * k * h + k * h
    second = k * h * k * c + 2 * k * c + c
    gat = AttentionOptions(model="gat", hidden=h, heads=k)
    assert parameter_count(gat, d, c) == first + second

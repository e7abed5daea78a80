"""Attention layers, hop sets and entropy checked against outside references.

Sources:
- Velickovic et al. (2018), "Graph Attention Networks", eqs. 1-6: e_ij = LeakyReLU(a^T [W h_i ||
  W h_j]), alpha_ij = softmax_j over N(i), h_i' = ||_k sum_j alpha_ij^k W^k h_j (concatenation)
  or 1/K sum_k sum_j alpha_ij^k W^k h_j (mean). Written out densely in NumPy below.
- Brody, Alon and Yahav (2022), "How Attentive are Graph Attention Networks?", eq. 7:
  e_ij = a^T LeakyReLU(W [h_i || h_j]), with W split into a target part and a source part.
- networkx single-source shortest path lengths for k-hop neighbourhoods.
- Shannon entropy of the uniform distribution over d outcomes is log(d) (Cover and Thomas,
  Elements of Information Theory, 2nd ed., section 2.1).
"""

from __future__ import annotations

import math

import networkx as nx
import numpy as np
import pytest
import torch

from harness.data.hops import build_hop_edges
from harness.models.attention import build
from harness.schema.contenders import AttentionOptions
from harness.training.diagnostics import node_entropy

NODES, FEATURES, WIDTH, HEADS, SLOPE = 9, 5, 3, 4, 0.15


def random_graph(seed: int) -> tuple[np.ndarray, torch.Tensor]:
    """A random undirected graph as a dense 0/1 matrix A[j, i] and its edge list."""
    rng = np.random.default_rng(seed)
    upper = np.triu(rng.random((NODES, NODES)) < 0.35, k=1)
    dense = (upper | upper.T).astype(np.int64)
    source, target = np.nonzero(dense)
    return dense, torch.tensor(np.stack([source, target]), dtype=torch.long)


def leaky_relu(values: np.ndarray, slope: float) -> np.ndarray:
    return np.where(values > 0, values, slope * values)


def masked_softmax(scores: np.ndarray, mask: np.ndarray) -> np.ndarray:
    """Softmax over j of scores[i, j, k] where mask[i, j]; zero elsewhere."""
    scores = np.where(mask[:, :, None], scores, -np.inf)
    scores = scores - scores.max(axis=1, keepdims=True)
    weights = np.exp(scores) * mask[:, :, None]
    return weights / weights.sum(axis=1, keepdims=True)


def dense_attention(layer: torch.nn.Module, x: np.ndarray, mask: np.ndarray, dynamic: bool):
    """alpha[i, j, k] and messages[j, k, :] from the published equations, in float64."""
    weights = {name: p.detach().double().numpy() for name, p in layer.named_parameters()}
    if dynamic:
        source = (x @ weights["lin_l.weight"].T + weights["lin_l.bias"]).reshape(NODES, HEADS, -1)
        target = (x @ weights["lin_r.weight"].T + weights["lin_r.bias"]).reshape(NODES, HEADS, -1)
        a = weights["att"][0]  # [heads, width]
        hidden = leaky_relu(target[:, None] + source[None, :], SLOPE)  # [i, j, k, c]
        scores = np.einsum("ijkc,kc->ijk", hidden, a)
        messages = source
    else:
        projected = (x @ weights["lin.weight"].T).reshape(NODES, HEADS, -1)  # W h
        # a = [a_target || a_source]: a^T [W h_i || W h_j] = a_target . W h_i + a_source . W h_j
        to_target = np.einsum("ikc,kc->ik", projected, weights["att_dst"][0])
        to_source = np.einsum("jkc,kc->jk", projected, weights["att_src"][0])
        scores = leaky_relu(to_target[:, None, :] + to_source[None, :, :], SLOPE)
        messages = projected
    return masked_softmax(scores, mask), messages, weights["bias"]


@pytest.mark.parametrize("model", ["gat", "gatv2"])
@pytest.mark.parametrize("merge", ["concatenate", "average"])
def test_layer_output_and_coefficients_equal_dense_equations(model: str, merge: str) -> None:
    """Velickovic et al. (2018) eqs. 1-6 and Brody et al. (2022) eq. 7, to 1e-5."""
    dense, edge_index = random_graph(seed=3)
    options = AttentionOptions(
        model=model, layers=1, hidden=WIDTH, heads=HEADS, head_merge=[merge], negative_slope=SLOPE
    )
    torch.manual_seed(0)
    stack = build(options, FEATURES, WIDTH).eval()
    x = torch.randn(NODES, FEATURES)
    with torch.no_grad():
        edges = stack.attention_edges(edge_index, NODES)
        out, (returned_edges, alpha) = stack.layers[0](x, edges, return_attention_weights=True)
    mask = (dense.T + np.eye(NODES)) > 0  # mask[i, j]: j in N(i), self included
    expected_alpha, messages, bias = dense_attention(
        stack.layers[0], x.double().numpy(), mask, dynamic=model == "gatv2"
    )
    target, source = returned_edges[1].numpy(), returned_edges[0].numpy()
    np.testing.assert_allclose(alpha.numpy(), expected_alpha[target, source], atol=1e-5)
    assert len(target) == mask.sum()  # every neighbour, and the self-loop, exactly once
    per_head = np.einsum("ijk,jkc->ikc", expected_alpha, messages)
    if merge == "concatenate":
        expected = per_head.reshape(NODES, HEADS * WIDTH) + bias
    else:
        expected = per_head.mean(axis=1) + bias
    np.testing.assert_allclose(out.numpy(), expected, atol=1e-5)


@pytest.mark.parametrize("seed", [0, 1, 2])
@pytest.mark.parametrize("radius", [1, 2, 3])
def test_hop_edges_equal_networkx_shortest_paths(seed: int, radius: int) -> None:
    """networkx.single_source_shortest_path_length with cutoff k gives the k-hop sets."""
    graph = nx.gnm_random_graph(40, 55, seed=seed)
    pairs = [[u, v] for u, v in graph.edges] + [[v, u] for u, v in graph.edges]
    edge_index = torch.tensor(pairs, dtype=torch.long).T
    ours = {tuple(p) for p in build_hop_edges(edge_index, 40, radius).T.tolist()}
    expected = {
        (j, i)
        for i in graph.nodes
        for j, distance in nx.single_source_shortest_path_length(graph, i, cutoff=radius).items()
        if 1 <= distance <= radius
    }
    assert ours == expected


def test_entropy_of_uniform_attention_is_log_degree() -> None:
    """H(uniform over d) = log d (Cover and Thomas, section 2.1)."""
    degrees = [1, 2, 3, 7, 12]
    target = torch.cat([torch.full((d,), i) for i, d in enumerate(degrees)])
    alpha = torch.cat([torch.full((d,), 1.0 / d) for d in degrees])
    entropy = node_entropy(target, alpha, len(degrees))
    np.testing.assert_allclose(entropy.numpy(), [math.log(d) for d in degrees], atol=1e-12)

"""The graph transformer layer against a hand computation of its published formulas (Shi et al.,
2021, "Masked label prediction", eq. 3-5 for the attention coefficients with edge attributes in
keys and values, eq. 7 for the gated residual), on a 4-node graph with fixed weights."""

from __future__ import annotations

import numpy as np
import torch

from harness.models import build_model
from harness.schema.contenders import TransformerOptions

# 4 nodes, directed edges source -> target, two attribute columns per edge
EDGES = np.array([[1, 2, 3, 0, 2], [0, 0, 0, 1, 3]])
ATTRIBUTES = np.array([[1.0, 0.0], [0.0, 1.0], [0.5, 0.5], [1.0, 1.0], [0.0, 2.0]])
X = np.array([[0.2, -1.0, 0.5], [1.0, 0.3, -0.2], [-0.4, 0.8, 0.1], [0.6, 0.6, -0.9]])


def fixed(layer: torch.nn.Module) -> None:
    """Every parameter set to a fixed, distinct pattern (no random initialisation)."""
    with torch.no_grad():
        for number, parameter in enumerate(layer.parameters()):
            values = torch.arange(parameter.numel(), dtype=torch.float32)
            parameter.copy_((torch.sin(values * 0.7 + number) * 0.5).reshape(parameter.shape))


def weights(linear: torch.nn.Module) -> tuple[np.ndarray, np.ndarray]:
    bias = np.zeros(linear.weight.shape[0]) if linear.bias is None else linear.bias.detach().numpy()
    return linear.weight.detach().numpy().astype(float), np.asarray(bias, dtype=float)


def by_hand(layer: torch.nn.Module, heads: int, width: int) -> np.ndarray:
    """Shi et al. (2021): q_i = W_q x_i + b_q, k_ij = W_k x_j + b_k + W_e e_ij,
    v_ij = W_v x_j + b_v + W_e e_ij, alpha_ij = softmax_j(q_i . k_ij / sqrt(d)),
    m_i = mean over heads of sum_j alpha_ij v_ij, r_i = W_r x_i + b_r,
    beta_i = sigmoid(w_b . [m_i, r_i, m_i - r_i]), h_i = beta_i r_i + (1 - beta_i) m_i."""
    (wq, bq), (wk, bk), (wv, bv) = (
        weights(layer.lin_query),
        weights(layer.lin_key),
        weights(layer.lin_value),
    )
    we, _ = weights(layer.lin_edge)
    wr, br = weights(layer.lin_skip)
    wb, _ = weights(layer.lin_beta)
    out = np.zeros((4, width))
    for i in range(4):
        incoming = [n for n in range(EDGES.shape[1]) if EDGES[1, n] == i]
        if not incoming:  # no messages: m_i = 0
            message = np.zeros(width)
        else:
            per_head = []
            for head in range(heads):
                rows = slice(head * width, (head + 1) * width)
                q = wq[rows] @ X[i] + bq[rows]
                keys = [
                    wk[rows] @ X[EDGES[0, n]] + bk[rows] + we[rows] @ ATTRIBUTES[n]
                    for n in incoming
                ]
                values = [
                    wv[rows] @ X[EDGES[0, n]] + bv[rows] + we[rows] @ ATTRIBUTES[n]
                    for n in incoming
                ]
                scores = np.array([q @ k for k in keys]) / np.sqrt(width)
                alpha = np.exp(scores - scores.max())
                alpha /= alpha.sum()
                per_head.append(sum(a * v for a, v in zip(alpha, values, strict=True)))
            message = np.mean(per_head, axis=0)
        skip = wr @ X[i] + br
        beta = 1 / (1 + np.exp(-(wb @ np.concatenate([message, skip, message - skip]))[0]))
        out[i] = beta * skip + (1 - beta) * message
    return out


def test_transformer_layer_equals_the_published_formulas() -> None:
    options = TransformerOptions(
        model="transformer", layers=1, heads=2, edge_features=True, attend_to_self=False
    )
    network = build_model(options, 3, 4, edge_width=2).eval()
    layer = network.layers[0]
    fixed(layer)
    with torch.no_grad():
        got = network(
            torch.tensor(X, dtype=torch.float32),
            torch.tensor(EDGES),
            edge_attr=torch.tensor(ATTRIBUTES, dtype=torch.float32),
        )
    np.testing.assert_allclose(got.numpy(), by_hand(layer, heads=2, width=4), rtol=1e-4, atol=1e-5)

"""The global-attention layer against a hand computation of Rampasek et al. (2022, "Recipe for
a general, powerful, scalable graph transformer", eq. 2-4): the local message-passing output
(GINE, Hu et al. 2020) and the global multi-head attention output, each with its residual and
batch normalisation, summed, then an MLP with a residual and a last batch normalisation; on a
4-node graph with fixed weights, in evaluation mode (batch normalisation with its initial
running statistics: x / sqrt(1 + 1e-5))."""

from __future__ import annotations

import numpy as np
import torch

from harness.models import build_model
from harness.schema.contenders import GlobalAttentionOptions

EDGES = np.array([[1, 2, 3, 0], [0, 0, 1, 3]])
ATTRIBUTES = np.array([[1.0, 0.0], [0.0, 1.0], [0.5, 0.5], [2.0, 0.0]])
X = np.array([[0.2, -1.0, 0.5], [1.0, 0.3, -0.2], [-0.4, 0.8, 0.1], [0.6, 0.6, -0.9]])
NORM = 1 / np.sqrt(1 + 1e-5)


def fixed(module: torch.nn.Module) -> None:
    with torch.no_grad():
        for number, parameter in enumerate(module.parameters()):
            values = torch.arange(parameter.numel(), dtype=torch.float32)
            parameter.copy_((torch.cos(values * 0.9 + number) * 0.4).reshape(parameter.shape))


def array(tensor: torch.Tensor) -> np.ndarray:
    return tensor.detach().numpy().astype(float)


def linear(module: torch.nn.Linear, x: np.ndarray) -> np.ndarray:
    return x @ array(module.weight).T + array(module.bias)


def norm(module: torch.nn.Module, x: np.ndarray) -> np.ndarray:
    """Batch normalisation in evaluation mode with running mean 0 and variance 1."""
    inner = module.module if hasattr(module, "module") else module
    return x * NORM * array(inner.weight) + array(inner.bias)


def relu(x: np.ndarray) -> np.ndarray:
    return np.maximum(x, 0)


def softmax(x: np.ndarray) -> np.ndarray:
    e = np.exp(x - x.max(axis=-1, keepdims=True))
    return e / e.sum(axis=-1, keepdims=True)


def by_hand(network: torch.nn.Module, heads: int) -> np.ndarray:
    entry, gps = network.layers[0].entry, network.layers[0].layer
    h = linear(entry, X)
    # local: GINE, h_i + sum_j ReLU(h_j + W_e e_ji), through its MLP (eps = 0)
    gine = gps.conv
    messages = np.zeros_like(h)
    for n in range(EDGES.shape[1]):
        source, target = EDGES[:, n]
        messages[target] += relu(h[source] + linear(gine.lin, ATTRIBUTES[n]))
    mlp = gine.nn
    local = linear(mlp[2], relu(linear(mlp[0], h + messages)))
    local = norm(gps.norm1, local + h)
    # global: multi-head softmax attention over all four nodes
    attention = gps.attn
    width = h.shape[1] // heads
    qkv = h @ array(attention.in_proj_weight).T + array(attention.in_proj_bias)
    q, k, v = np.split(qkv, 3, axis=1)
    parts = []
    for head in range(heads):
        cols = slice(head * width, (head + 1) * width)
        weights = softmax(q[:, cols] @ k[:, cols].T / np.sqrt(width))
        parts.append(weights @ v[:, cols])
    merged = linear(attention.out_proj, np.concatenate(parts, axis=1))
    global_part = norm(gps.norm2, merged + h)
    # the sum, then the MLP with its residual and the last normalisation
    total = local + global_part
    block = gps.mlp
    total = total + linear(block[3], relu(linear(block[0], total)))
    out = norm(gps.norm3, total)
    return linear(network.exit, out)


def test_global_attention_layer_equals_the_published_sum() -> None:
    options = GlobalAttentionOptions(model="global_attention", layers=1, hidden=4, heads=2)
    network = build_model(options, 3, 2, edge_width=2).eval()
    fixed(network)
    with torch.no_grad():
        got = network(
            torch.tensor(X, dtype=torch.float32),
            torch.tensor(EDGES),
            edge_attr=torch.tensor(ATTRIBUTES, dtype=torch.float32),
        )
    np.testing.assert_allclose(got.numpy(), by_hand(network, heads=2), rtol=1e-4, atol=1e-5)

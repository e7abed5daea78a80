"""Per-node predictions of a run: the class probabilities of its test nodes, kept compact.

Encoding (one blob per run): a 12-byte header (node count of the graph, classes, test nodes),
then, LZMA-compressed, the test nodes as a bit mask over all nodes and their probabilities as
float16, one class after another, low bytes before high bytes (grouping like bytes packs
better). Test nodes are stored in ascending node order, so runs of one seed share the order.
"""

from __future__ import annotations

import base64
import lzma
import struct
from collections.abc import Iterable
from pathlib import Path

import numpy as np

from harness.storage.store import load_encoded_predictions
from harness.training.fit import NodePredictions

HEADER = struct.Struct("<IHI")  # nodes in the graph, classes, test nodes


def encode(predictions: NodePredictions) -> bytes:
    """The stored form of one run's test predictions (nodes in any order)."""
    order = np.argsort(predictions.nodes, kind="stable")
    nodes, values = predictions.nodes[order], predictions.probabilities[order]
    graph_nodes = predictions.graph_nodes
    mask = np.zeros(graph_nodes, dtype=bool)
    mask[nodes] = True
    halves = np.ascontiguousarray(values.astype(np.float16).T).view(np.uint8)
    planes = halves.reshape(-1, 2).T.tobytes()  # all low bytes, then all high bytes
    payload = np.packbits(mask).tobytes() + planes
    header = HEADER.pack(graph_nodes, values.shape[1], len(nodes))
    return header + lzma.compress(payload, preset=9)


def decode(blob: bytes) -> NodePredictions:
    graph_nodes, classes, count = HEADER.unpack_from(blob)
    payload = lzma.decompress(blob[HEADER.size :])
    mask_bytes = (graph_nodes + 7) // 8
    mask = np.unpackbits(np.frombuffer(payload[:mask_bytes], dtype=np.uint8))[:graph_nodes]
    planes = np.frombuffer(payload[mask_bytes:], dtype=np.uint8).reshape(2, -1)
    halves = np.ascontiguousarray(planes.T).view(np.float16).reshape(classes, count)
    return NodePredictions(np.flatnonzero(mask), halves.T.astype(np.float32), graph_nodes)


def to_text(blob: bytes) -> str:
    """JSON-safe form, for records that travel through tuning storage."""
    return base64.b64encode(blob).decode("ascii")


def from_text(text: str) -> bytes:
    return base64.b64decode(text)


def load_predictions(store_path: str | Path, keys: Iterable[str]) -> dict[str, NodePredictions]:
    """The stored test predictions of these run keys, decoded; keys without any are left out."""
    return {key: decode(blob) for key, blob in load_encoded_predictions(store_path, keys).items()}

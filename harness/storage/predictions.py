"""Per-node predictions of a run: the class probabilities of its test nodes, kept compact.

Encoding (one blob per run): an 11-byte header (node count of the graph, classes, test nodes,
bits per probability), then, compressed as a bare LZMA2 stream, the test nodes as a bit mask
over all nodes and their probabilities as 8-bit levels that sum to 255 per node, one class
after another, the last class left out (255 minus the others). Test nodes are stored in
ascending node order, so runs of one seed share the order. Each node's predicted class is
kept exactly (it alone holds the top level), so accuracy and macro-F1 per group equal the
run's own; every probability is within 2/255 of the run's, which moved ROC-AUC by under 0.002
in our checks (docs/reports.md, "Cost of storing predictions"). Blobs of the first encoding
(float16, 10-byte header, .xz container) still read.
"""

from __future__ import annotations

import base64
import lzma
import struct
from collections.abc import Iterable
from pathlib import Path

import numpy as np

from harness.results import NodePredictions
from harness.storage.store import load_encoded_predictions

HEADER = struct.Struct("<IHIB")  # nodes in the graph, classes, test nodes, bits per value
FLOAT16_HEADER = struct.Struct("<IHI")  # the first encoding: float16 values, no bits field
LEVELS = 255
XZ_MAGIC = b"\xfd7zXZ\x00"  # the first encoding's payload starts with it (the .xz format)
# a bare LZMA2 stream: the .xz container's headers and checks would add ~60 bytes a run
FILTERS = [{"id": lzma.FILTER_LZMA2, "preset": 9 | lzma.PRESET_EXTREME}]


def levels(probabilities: np.ndarray) -> np.ndarray:
    """8-bit levels of class probabilities (rows: nodes) that sum to 255 per node, each within
    one level of p * 255 (largest remainders round up); the top class then gets a level above
    every other class's, taken from the runner-up, so the predicted class survives rounding."""
    scaled = probabilities.astype(np.float64)
    scaled = scaled / scaled.sum(1, keepdims=True) * LEVELS
    values = np.floor(scaled)
    short = LEVELS - values.sum(1).astype(int)  # 0 to classes - 1 levels still to give out
    remainder_rank = np.argsort(np.argsort(values - scaled, axis=1, kind="stable"), axis=1)
    values += remainder_rank < short[:, None]
    rows, top = np.arange(len(values)), probabilities.argmax(1)
    while values.shape[1] > 1:
        others = values.copy()
        others[rows, top] = -1
        runner_up = others.argmax(1)
        tied = others[rows, runner_up] >= values[rows, top]
        if not tied.any():
            break
        # a runner-up at or above the top level holds at least one level (they sum to 255)
        values[rows[tied], runner_up[tied]] -= 1
        values[rows[tied], top[tied]] += 1
    return values.astype(np.uint8)


def encode(predictions: NodePredictions) -> bytes:
    """The stored form of one run's test predictions (nodes in any order)."""
    order = np.argsort(predictions.nodes, kind="stable")
    nodes, values = predictions.nodes[order], predictions.probabilities[order]
    graph_nodes = predictions.graph_nodes
    mask = np.zeros(graph_nodes, dtype=bool)
    mask[nodes] = True
    # class after class; the last class is 255 minus the others
    planes = np.ascontiguousarray(levels(values)[:, :-1].T).tobytes()
    payload = np.packbits(mask).tobytes() + planes
    header = HEADER.pack(graph_nodes, values.shape[1], len(nodes), 8)
    return header + lzma.compress(payload, format=lzma.FORMAT_RAW, filters=FILTERS)


def decode(blob: bytes) -> NodePredictions:
    if blob[FLOAT16_HEADER.size :].startswith(XZ_MAGIC):
        return _decode_float16(blob)
    graph_nodes, classes, count, _ = HEADER.unpack_from(blob)
    mask, values = _payload(blob[HEADER.size :], graph_nodes, raw=True)
    stored = np.frombuffer(values, dtype=np.uint8).reshape(classes - 1, count).T.astype(np.int32)
    last = LEVELS - stored.sum(1, keepdims=True)
    probabilities = np.hstack([stored, last]).astype(np.float32) / LEVELS
    return NodePredictions(np.flatnonzero(mask), probabilities, graph_nodes)


def _payload(compressed: bytes, graph_nodes: int, raw: bool = False) -> tuple[np.ndarray, bytes]:
    if raw:
        payload = lzma.decompress(compressed, format=lzma.FORMAT_RAW, filters=FILTERS)
    else:
        payload = lzma.decompress(compressed)
    mask_bytes = (graph_nodes + 7) // 8
    mask = np.unpackbits(np.frombuffer(payload[:mask_bytes], dtype=np.uint8))[:graph_nodes]
    return mask, payload[mask_bytes:]


def _decode_float16(blob: bytes) -> NodePredictions:
    """The first encoding: float16, all low bytes, then all high bytes."""
    graph_nodes, classes, count = FLOAT16_HEADER.unpack_from(blob)
    mask, values = _payload(blob[FLOAT16_HEADER.size :], graph_nodes)
    planes = np.frombuffer(values, dtype=np.uint8).reshape(2, -1)
    halves = np.ascontiguousarray(planes.T).view(np.float16).reshape(classes, count)
    return NodePredictions(np.flatnonzero(mask), halves.T.astype(np.float32), graph_nodes)


def to_text(blob: bytes) -> str:
    """JSON-safe form, for records that travel through tuning storage."""
    return base64.b64encode(blob).decode("ascii")


def load_predictions(store_path: str | Path, keys: Iterable[str]) -> dict[str, NodePredictions]:
    """The stored test predictions of these run keys, decoded; keys without any are left out."""
    return {key: decode(blob) for key, blob in load_encoded_predictions(store_path, keys).items()}

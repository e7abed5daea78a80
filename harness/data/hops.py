"""k-hop edge sets: who a node may attend to when the attention reaches k hops.

With A the 0/1 adjacency (A[j, i] = 1 for an edge j -> i), node j lies within k hops of i
when (A + A^2 + ... + A^k)[j, i] > 0. The powers are sparse products (scipy), binarised after
each step so the entries stay small. The diagonal is dropped: whether a node attends to itself
is the model's choice. Edge sets are cached on disk under a content hash of the graph, so
each (graph, radius) pair is built once, whichever suite or worker asks first. Each file keeps
a digest of its edges bound to the graph and radius; a file that does not match is named in a
warning and rebuilt, never used.
"""

from __future__ import annotations

import hashlib
import os
import sys
import tempfile
from pathlib import Path

import numpy as np
import scipy.sparse as sp
import torch

from harness.errors import InputError

BYTES_PER_INDEX_PAIR = 16  # two int64 node ids
BYTES_PER_HEAD_SCORE = 12  # score, softmax weight and dropout mask per edge and head, float32
MEBIBYTE = 2**20


def adjacency(edge_index: torch.Tensor, nodes: int) -> sp.csr_matrix:
    """0/1 sparse adjacency A[source, target]."""
    source, target = edge_index.numpy()
    values = np.ones(len(source), dtype=np.int64)
    matrix = sp.csr_matrix((values, (source, target)), shape=(nodes, nodes))
    matrix.data[:] = 1  # repeated edges count once
    return matrix


def build_hop_edges(edge_index: torch.Tensor, nodes: int, radius: int) -> torch.Tensor:
    """Edges j -> i for every pair with 1 <= hop distance(j, i) <= radius, j != i, sorted."""
    step = adjacency(edge_index, nodes)
    reach = step.copy()
    power = step
    for _ in range(radius - 1):
        power = power @ step
        power.data[:] = 1
        reach = reach + power
        reach.data[:] = 1
    reach.setdiag(0)
    reach.eliminate_zeros()
    reach = reach.tocoo()
    order = np.lexsort((reach.col, reach.row))
    pairs = np.stack([reach.row[order], reach.col[order]]).astype(np.int64)
    return torch.from_numpy(pairs)


def estimate_hop_edges(edge_index: torch.Tensor, nodes: int, radius: int) -> int:
    """An upper estimate of the k-hop edge count without building the set.

    Walks of length <= k out of each node (k sparse matrix-vector products) bound the nodes
    it reaches; each node reaches at most nodes - 1 others.
    """
    step = adjacency(edge_index, nodes)
    walks = np.ones(nodes, dtype=np.float64)
    total = np.zeros(nodes, dtype=np.float64)
    for _ in range(radius):
        walks = step @ walks
        total += walks
    return int(np.minimum(total, nodes - 1).sum())


def attention_bytes(edges: int, heads_per_layer: list[int]) -> int:
    """Rough memory of attention over `edges` edges: index pairs plus per-head edge tensors."""
    return edges * (BYTES_PER_INDEX_PAIR + BYTES_PER_HEAD_SCORE * sum(heads_per_layer))


def graph_hash(edge_index: torch.Tensor, nodes: int) -> str:
    """Content hash of a graph's structure (node count and edge list)."""
    digest = hashlib.sha256()
    digest.update(str(nodes).encode())
    digest.update(edge_index.to(torch.int64).contiguous().numpy().tobytes())
    return digest.hexdigest()[:32]


def hop_edges(
    edge_index: torch.Tensor, nodes: int, radius: int, cache: str | Path | None = None
) -> torch.Tensor:
    """The radius-hop edge set, read from or written to the disk cache when one is given."""
    if radius == 1:
        return build_hop_edges(edge_index, nodes, 1)
    if cache is None:
        return build_hop_edges(edge_index, nodes, radius)
    folder = Path(cache)
    graph = graph_hash(edge_index, nodes)
    path = folder / f"hops-{graph}-radius{radius}.pt"
    if path.exists():
        edges, problem = read_hop_file(path, graph, radius)
        if edges is not None:
            return edges
        print(f"heedful: warning: {path}: {problem}; rebuilt", file=sys.stderr, flush=True)
    edges = build_hop_edges(edge_index, nodes, radius)
    folder.mkdir(parents=True, exist_ok=True)
    # write then rename, so a worker never reads a half-written file from another worker
    handle, temporary = tempfile.mkstemp(dir=folder, suffix=".part")
    os.close(handle)
    torch.save({"edges": edges, "digest": hop_digest(edges, graph, radius)}, temporary)
    os.replace(temporary, path)
    return edges


def hop_digest(edges: torch.Tensor, graph: str, radius: int) -> str:
    """SHA-256 of a hop edge set bound to its graph and radius: a file copied from another
    graph's cache, or edited, does not match."""
    digest = hashlib.sha256(f"{graph}:{radius}:".encode())
    digest.update(edges.contiguous().numpy().tobytes())
    return digest.hexdigest()


def read_hop_file(path: Path, graph: str, radius: int) -> tuple[torch.Tensor | None, str]:
    """A cached edge set whose stored digest matches, else None and what is wrong with it."""
    try:
        stored = torch.load(path, weights_only=True)
    except Exception as error:  # torch raises several types for damaged or foreign files
        return None, f"not a readable hop cache file ({type(error).__name__})"
    if not isinstance(stored, dict) or set(stored) != {"edges", "digest"}:
        return None, "holds no digest (written by an older version, or not by this program)"
    edges = stored["edges"]
    if not (isinstance(edges, torch.Tensor) and edges.dtype == torch.int64 and edges.dim() == 2):
        return None, "holds no edge list"
    if stored["digest"] != hop_digest(edges, graph, radius):
        return None, f"its edges do not match its digest for this graph at radius {radius}"
    return edges, ""


def check_hop_budget(
    edge_index: torch.Tensor,
    nodes: int,
    radius: int,
    heads_per_layer: list[int],
    budget_mb: float,
    where: str,
) -> None:
    """Stop before building a k-hop edge set whose attention would exceed the memory budget."""
    edges = estimate_hop_edges(edge_index, nodes, radius)
    needed = attention_bytes(edges, heads_per_layer) / MEBIBYTE
    if needed > budget_mb:
        raise InputError(
            f"{where}: given {radius}; the {radius}-hop edge set is estimated at {edges:,} "
            f"edges, about {needed:,.1f} MB of attention with {sum(heads_per_layer)} heads in "
            f"all, above hops.memory_budget_mb = {budget_mb:g}; allowed: a smaller hop_radius "
            "or a larger hops.memory_budget_mb"
        )

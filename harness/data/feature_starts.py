"""Feature starts: the node features a contender starts from, derived from the graph.

given         the source's features x
identity      node ids; the model looks each up in a learned embedding table (one row per node)
degree        one-hot of min(degree, degree_cap)
log_degree    log(1 + degree), one column
random        N(0, 1) features of `start_width` columns, fixed by the run's seed
constant      a single column of ones: the model sees structure only
given_degree  the given features followed by the one-hot capped degree
laplacian     the `start_width` eigenvectors of the symmetric normalised Laplacian
              L = I - D^{-1/2} A D^{-1/2} with the smallest non-zero eigenvalues
              (Dwivedi et al., 2020), via PyG's AddLaplacianEigenvectorPE
random_walk   landing probabilities ((D^{-1} A)^t)_{ii} for t = 1..start_width
              (Dwivedi et al., 2022), via PyG's AddRandomWalkPE
Degree counts incoming edges of the undirected edge list, so it is the usual degree.
"""

from __future__ import annotations

import copy
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import torch
from pydantic import BaseModel
from torch_geometric.data import Data
from torch_geometric.transforms import AddLaplacianEigenvectorPE, AddRandomWalkPE
from torch_geometric.utils import degree as node_degree
from torch_geometric.utils import one_hot

from harness.data.hops import check_hop_budget, hop_edges
from harness.errors import InputError
from harness.planning import DesignPoint


@dataclass(frozen=True)
class StartedGraph:
    """A graph whose `x` is the contender's feature start.

    When `embedding_rows` > 0, `x` holds node ids (int64) for an embedding table of that many
    rows and `width` columns; otherwise `x` is float with `width` columns.
    """

    data: Data
    width: int
    embedding_rows: int = 0


def degrees(data: Data) -> torch.Tensor:
    return node_degree(data.edge_index[1], data.num_nodes, dtype=torch.long)


def degree_one_hot(data: Data, cap: int) -> torch.Tensor:
    return one_hot(degrees(data).clamp(max=cap), num_classes=cap + 1)


def random_features(data: Data, width: int, seed: int) -> torch.Tensor:
    """N(0, 1) rows drawn in node-id order, so a node keeps its row in any subgraph that
    records its ids as `original` (the inductive training graph)."""
    ids = getattr(data, "original", None)
    ids = torch.arange(data.num_nodes) if ids is None else ids
    rows = int(ids.max()) + 1 if len(ids) else 0
    table = np.random.default_rng(seed).standard_normal((rows, width)).astype(np.float32)
    return torch.from_numpy(table)[ids]


def laplacian_encoding(data: Data, count: int, seed: int) -> torch.Tensor:
    """Eigenvector signs are arbitrary; PyG flips them at random, so we fix its generator."""
    plain = Data(edge_index=data.edge_index, num_nodes=data.num_nodes)
    start = np.random.default_rng(seed).random(data.num_nodes)  # fixed ARPACK start vector
    extra = {"v0": start} if data.num_nodes >= AddLaplacianEigenvectorPE.SPARSE_THRESHOLD else {}
    with torch.random.fork_rng():
        torch.manual_seed(seed)
        out = AddLaplacianEigenvectorPE(count, is_undirected=True, **extra)(plain)
    return out.laplacian_eigenvector_pe.float()


def random_walk_encoding(data: Data, steps: int) -> torch.Tensor:
    plain = Data(edge_index=data.edge_index, num_nodes=data.num_nodes)
    return AddRandomWalkPE(steps)(plain).random_walk_pe.float()


# feature start (the schema's `feature_start`) -> x of the started graph from (data, options,
# seed); "given" keeps the graph as it is and "identity" gives node ids for an embedding
STARTS: dict[str, Callable[[Data, BaseModel, int], torch.Tensor]] = {
    "given": lambda data, options, seed: data.x,
    "identity": lambda data, options, seed: torch.arange(data.num_nodes),
    "degree": lambda data, options, seed: degree_one_hot(data, options.degree_cap).float(),
    "log_degree": lambda data, options, seed: torch.log1p(degrees(data).float()).unsqueeze(1),
    "random": lambda data, options, seed: random_features(data, options.start_width, seed),
    "constant": lambda data, options, seed: torch.ones(data.num_nodes, 1),
    "given_degree": lambda data, options, seed: torch.cat(
        [data.x, degree_one_hot(data, options.degree_cap).float()], dim=1
    ),
    "laplacian": lambda data, options, seed: laplacian_encoding(data, options.start_width, seed),
    "random_walk": lambda data, options, seed: random_walk_encoding(data, options.start_width),
}


def start_features(data: Data, options: BaseModel, seed: int) -> StartedGraph:
    """The graph with `x` replaced by the contender's feature start (other fields shared)."""
    kind = options.feature_start
    if kind == "given":
        return StartedGraph(data, data.num_features)
    started = copy.copy(data)
    started.x = STARTS[kind](data, options, seed)
    if kind == "identity":
        return StartedGraph(started, options.start_width, embedding_rows=data.num_nodes)
    return StartedGraph(started, started.x.size(1))


def check_feature_start(nodes: int, options: BaseModel, where: str) -> None:
    """Positional encodings cannot ask for more eigenvectors than the graph has."""
    if options.feature_start == "laplacian" and options.start_width > nodes - 2:
        raise InputError(
            f"{where}: given start_width = {options.start_width} Laplacian eigenvectors for a "
            f"graph of {nodes} nodes; allowed: at most nodes - 2 = {nodes - 2}"
        )


def contender_graph(data: Data, options: BaseModel, seed: int, hop_cache: str) -> StartedGraph:
    """The graph a contender sees: its feature start, and for attention its hop edge set."""
    started = start_features(data, options, seed)
    radius = options.layer_radius()
    if radius == 1:
        return started
    graph = copy.copy(started.data)
    graph.edge_index = hop_edges(data.edge_index, data.num_nodes, radius, hop_cache)
    return StartedGraph(graph, started.width, started.embedding_rows)


def _where(design: DesignPoint, key: str, source: str) -> str:
    if key in design.varied:
        return f"{source}: ablation.{design.contender}.axes.{key}"
    return f"{source}: contenders.{design.contender}.{key}"


def check_contender_graphs(
    designs: list[DesignPoint], data: Data, budget_mb: float, source: str
) -> None:
    """Check-time errors that need the graph: eigenvector counts and the hop memory budget."""
    for design in designs:
        options = design.options
        check_feature_start(data.num_nodes, options, _where(design, "start_width", source))
        radius = options.layer_radius()
        if radius > 1:
            where = _where(design, "hop_radius", source)
            heads = options.heads_per_layer()
            check_hop_budget(data.edge_index, data.num_nodes, radius, heads, budget_mb, where)

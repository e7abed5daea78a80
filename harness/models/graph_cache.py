"""What a model derives from a graph's edges once and reuses on every forward pass.

Attention edge sets and graph-convolution weights depend on the graph only, not on the
weights, yet PyG layers rebuild them on every call. A model keeps an `EdgeCache`: while the
same edge tensor comes back (training and validation epochs of one run), the derived tensors
are reused; any other edge tensor (another graph, a subgraph) is derived afresh. A second
cache keeps the last layer's edges into the validation rows (see `into_rows`).
"""

from __future__ import annotations

from collections.abc import Callable

import torch


class EdgeCache:
    """One entry, keyed by the source objects themselves (held, so that no other tensor can
    take their address) and by plain values such as in-place version counters and sizes."""

    def __init__(self) -> None:
        self.sources: tuple = ()
        self.key: tuple = ()
        self.value: tuple[torch.Tensor, ...] = ()

    @torch.compiler.disable  # a lookup, not math: compiled code calls it as plain Python
    def get(
        self, sources: tuple, key: tuple, build: Callable[[], tuple[torch.Tensor, ...]]
    ) -> tuple[torch.Tensor, ...]:
        same = len(sources) == len(self.sources) and all(
            new is old for new, old in zip(sources, self.sources, strict=True)
        )
        if not same or key != self.key:
            self.value = build()
            self.sources, self.key = sources, key
        return self.value

    def __getstate__(self) -> dict:
        return {}  # a copied or pickled model derives its edges afresh

    def __setstate__(self, state: dict) -> None:
        self.__init__()


def once_per_graph(
    cache: EdgeCache,
    edge_index: torch.Tensor,
    nodes: int,
    build: Callable[..., tuple],
    edge_attr: torch.Tensor | None = None,
) -> tuple:
    """`build(edge_index, nodes)` (a model's message edges), computed once per edge tensor;
    with `edge_attr`, `build(edge_index, nodes, edge_attr)`, once per pair of tensors."""
    if edge_attr is None:
        return cache.get(
            (edge_index,), (edge_index._version, nodes), lambda: build(edge_index, nodes)
        )
    key = (edge_index._version, edge_attr._version, nodes)
    return cache.get((edge_index, edge_attr), key, lambda: build(edge_index, nodes, edge_attr))


def into_rows(cache: EdgeCache, graph: tuple, rows: torch.Tensor, nodes: int) -> tuple:
    """The message edges (edge_index, then per-edge tensors or None) kept only for edges into
    `rows`, in their order: a last layer on them gives the same outputs at those rows
    (each row sums the same terms in the same order) without computing the other rows."""

    def build() -> tuple:
        if not graph:
            return graph
        wanted = torch.zeros(nodes, dtype=torch.bool)
        wanted[rows] = True
        keep = wanted[graph[0][1]]
        rest = (None if tensor is None else tensor[keep] for tensor in graph[1:])
        return (graph[0][:, keep], *rest)

    return cache.get((graph, rows), (rows._version, nodes), build)

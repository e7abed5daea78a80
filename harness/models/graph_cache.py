"""What a model derives from a graph's edges once and reuses on every forward pass.

Attention edge sets and graph-convolution weights depend on the graph only, not on the
weights, yet PyG layers rebuild them on every call. A model keeps one `EdgeCache`: while the
same edge tensor comes back (training and validation epochs of one run), the derived tensors
are reused; any other edge tensor (another graph, a subgraph) is derived afresh.
"""

from __future__ import annotations

from collections.abc import Callable

import torch


class EdgeCache:
    """One entry, keyed by the edge tensor itself (held, so its address cannot be reused by
    another tensor), its in-place version counter, the node count and the feature dtype."""

    def __init__(self) -> None:
        self.source: torch.Tensor | None = None
        self.key: tuple = ()
        self.value: tuple[torch.Tensor, ...] = ()

    @torch.compiler.disable  # a lookup, not math: compiled code calls it as plain Python
    def get(
        self,
        edge_index: torch.Tensor,
        nodes: int,
        dtype: torch.dtype,
        build: Callable[[torch.Tensor, int, torch.dtype], tuple[torch.Tensor, ...]],
    ) -> tuple[torch.Tensor, ...]:
        key = (edge_index._version, nodes, dtype)
        if edge_index is not self.source or key != self.key:
            self.value = build(edge_index, nodes, dtype)
            self.source, self.key = edge_index, key
        return self.value

    def __getstate__(self) -> dict:
        return {}  # a copied or pickled model derives its edges afresh

    def __setstate__(self, state: dict) -> None:
        self.__init__()

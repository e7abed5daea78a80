"""Where the sparse attention kernel starts to pay: one attention layer, forward plus backward,
PyG's scatter layer against the same layer on the sparse kernel, over growing edge counts.

Random graphs with `edges` directed edges on edges / 20 nodes plus one self-loop per node,
64 input features, 8 heads x 8. `build` is the one-off sort of the edges into target order
(once per graph for full-batch runs, once per batch for sampled ones). Each figure is the best
of `--repeats` runs, after one warm-up; with several `--threads` counts, each layer runs at
each count in turn, side by side in one process. `[training] kernel = "auto"` uses the sparse
kernel from harness.planning.run_choices.SPARSE_MIN_EDGES message edges per step on
(docs/performance.md).

    .venv/bin/python benchmarks/kernel_threshold.py --edges 10000,30000,100000
    # the 100k-node graph of benchmarks/large_graphs.py's size (2.1M edges), one thread
    # against two: about 3 minutes on an idle 2-core machine
    .venv/bin/python benchmarks/kernel_threshold.py --edges 2000000 --kinds gat,gatv2 \
        --threads 1,2
"""

from __future__ import annotations

# isort: off
import harness  # noqa: F401  (first: Heedful's OpenMP wait policy must be set before torch loads)

# isort: on
import argparse
import json
import os
import time

import torch
from torch_geometric.nn import GATConv, GATv2Conv, TransformerConv
from torch_geometric.utils import add_self_loops

from harness.models.sparse_kernel import target_graph
from harness.models.sparse_layers import sparse_forward

LAYERS = {"gat": GATConv, "gatv2": GATv2Conv, "dot_product": TransformerConv}


def best_seconds(step, repeats: int) -> float:  # noqa: ANN001
    step()
    times = []
    for _ in range(repeats):
        started = time.perf_counter()
        step()
        times.append(time.perf_counter() - started)
    return min(times)


def measure(kind: str, edges: int, repeats: int, thread_counts: list[int]) -> list[dict]:
    nodes = max(edges // 20, 2)
    generator = torch.Generator().manual_seed(0)
    edge_index = add_self_loops(torch.randint(0, nodes, (2, edges), generator=generator))[0]
    x = torch.randn(nodes, 64)
    options = {} if kind == "dot_product" else {"add_self_loops": False}
    layer = LAYERS[kind](64, 8, heads=8, **options)
    started = time.perf_counter()
    graph = target_graph(edge_index, nodes)
    build = time.perf_counter() - started

    def scatter() -> None:
        layer(x, edge_index).sum().backward()

    def sparse() -> None:
        sparse_forward(layer, x, graph).sum().backward()

    rows = []
    for threads in thread_counts:
        torch.set_num_threads(threads)
        rows.append(
            {
                "kind": kind,
                "edges": int(edge_index.size(1)),
                "threads": threads,
                "scatter_seconds": best_seconds(scatter, repeats),
                "sparse_seconds": best_seconds(sparse, repeats),
                "build_seconds": build,
                "load_average": os.getloadavg()[0],
            }
        )
    return rows


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--edges", default="3000,10000,30000,100000")
    parser.add_argument("--kinds", default=",".join(LAYERS))
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--threads", default="1", help="thread counts, side by side: 1,2")
    args = parser.parse_args()
    thread_counts = [int(count) for count in args.threads.split(",")]
    for edges in (int(count) for count in args.edges.split(",")):
        for kind in args.kinds.split(","):
            for row in measure(kind, edges, args.repeats, thread_counts):
                print(json.dumps(row), flush=True)


if __name__ == "__main__":
    main()

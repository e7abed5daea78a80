"""New-node arrival (run by hand): partial update of the affected outputs against a full
recompute, per new node, on synthetic graphs of growing size.

Each graph holds 90% of its nodes at the start; the other 10% arrive in batches of 20. After
every batch only the outputs within reach of the new nodes are recomputed, and compared with a
full recompute (the largest difference is printed: 0 or rounding level when correct).
Two kinds of graph: the contextual block model ("random"), where a few hops reach most of the
graph, and a k-nearest-neighbour graph of random points in the unit square ("spatial", k = 6),
where neighbourhoods stay local, as in road, delivery or sensor networks.

    .venv/bin/python benchmarks/arrival.py [--sizes 2000,20000] [--threads 1]
"""

from __future__ import annotations

import argparse
import platform
import sys
from pathlib import Path

import numpy as np
import torch
from pydantic import TypeAdapter
from sklearn.neighbors import kneighbors_graph

sys.path.insert(0, str(Path(__file__).resolve().parent))

from harness.data import load_graph  # noqa: E402
from harness.data.assemble import assemble  # noqa: E402
from harness.data.inductive import measure_arrival  # noqa: E402
from harness.data.splits import make_split  # noqa: E402
from harness.gate.baseline import cpu_model  # noqa: E402
from harness.models import build_model  # noqa: E402
from harness.schema.data import SyntheticData  # noqa: E402
from harness.schema.model_kinds import ContenderOptions  # noqa: E402
from harness.schema.splits import FractionSplit  # noqa: E402

CONTENDERS = {
    "gat": ({"model": "gat", "heads": 4, "hidden": 8}, 2),
    "gcn": ({"model": "gcn", "hidden": 32}, 3),  # degree weights: one hop more
    "sage": ({"model": "sage", "hidden": 32}, 2),
}


def spatial_graph(nodes: int):
    """k-NN graph of uniform points; class = quadrant, features = noisy coordinates."""
    rng = np.random.default_rng(0)
    points = rng.random((nodes, 2))
    adjacency = kneighbors_graph(points, n_neighbors=6).tocoo()
    labels = (points[:, 0] > 0.5).astype(int) * 2 + (points[:, 1] > 0.5)
    features = np.hstack([points, rng.standard_normal((nodes, 14))])
    return assemble(features, adjacency.row, adjacency.col, labels, unordered_repeats=False)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="2000,20000")
    parser.add_argument("--threads", type=int, default=1)
    args = parser.parse_args()
    torch.set_num_threads(args.threads)
    print(f"machine: {cpu_model()}, {platform.python_version()}, torch threads {args.threads}")
    print("graph    nodes  model  new nodes  update ms/node  full ms/node  ratio  max difference")
    sizes = [int(size) for size in args.sizes.split(",")]
    for kind, nodes in [(kind, nodes) for kind in ("random", "spatial") for nodes in sizes]:
        if kind == "random":
            section = SyntheticData(source="synthetic", nodes=nodes, classes=4, average_degree=6)
            data = load_graph(section)
        else:
            data = spatial_graph(nodes)
        split = make_split(data, FractionSplit(train=0.9, validation=0.05, test=0.05), 0)
        batches = (len(split.validation) + len(split.test)) // 20
        for name, (options, radius) in CONTENDERS.items():
            contender = TypeAdapter(ContenderOptions).validate_python(options)
            torch.manual_seed(0)
            model = build_model(contender, data.num_features, 4)
            report = measure_arrival(model, data, split, radius, batches=batches)
            update = report.update_seconds_per_new_node * 1000
            full = report.full_seconds_per_new_node * 1000
            print(
                f"{kind:>7} {nodes:>6} {name:>5} {report.new_nodes:>10} {update:>15.3f} "
                f"{full:>13.3f} {full / update:>6.1f} {report.max_difference:>15.2g}"
            )


if __name__ == "__main__":
    main()

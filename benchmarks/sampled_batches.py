"""Full batch against neighbour-sampled batches on a 1M-node graph: memory, time, accuracy.

A synthetic graph of 1,000,000 nodes and 5,000,000 undirected edges (average degree 10), 64
features, 5 classes; contenders GAT (8 heads x 8) and GCN (64), each trained full batch and
with sampled batches (batch 1024, fan-out 10, 10) for the same number of epochs. Each
configuration runs through Heedful's own `perform` in a fresh process on one torch thread, so
its peak resident memory (getrusage) is its own; the process also builds the graph, as a
`heedful run` worker does. Validation and test of both are exact full-neighbourhood scores.

Run by hand, one heavy job at a time on a shared machine:
  flock /tmp/heedful-bench.lock .venv/bin/python benchmarks/sampled_batches.py [--epochs 3]
Goal (issue 14): GAT sampled at most 3 GB peak resident; accuracy within 1 point of full batch.
"""

from __future__ import annotations

# isort: off
import harness  # noqa: F401  (first: Heedful's OpenMP wait policy must be set before torch loads)

# isort: on
import argparse
import json
import platform
import resource
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
CONTENDERS = {
    "gat": 'model = "gat"\nheads = 8\nhidden = 8',
    "gcn": 'model = "gcn"\nhidden = 64',
}
SAMPLED = 'batching = "sampled"\nbatch_size = 1024\nfanout = [10, 10]'


def suite_text(contender: str, batching: str, epochs: int, nodes: int) -> str:
    return f"""\
name = "sampled_benchmark"
seeds = 1
[data]
source = "synthetic"
nodes = {nodes}
average_degree = 10
classes = 5
feature_dimension = 64
edge_homophily = 0.7
feature_signal = 0.7
[split]
train = 0.1
validation = 0.1
test = 0.8
[training]
epochs = {epochs}
patience = {epochs}
{SAMPLED if batching == "sampled" else ""}
[contenders.{contender}]
{CONTENDERS[contender]}
"""


def one(contender: str, batching: str, epochs: int, nodes: int) -> dict:
    """Train one configuration in this process and report its figures."""
    import torch

    from harness.planning import expand, parse_suite

    torch.set_num_threads(1)
    import tomllib

    suite = parse_suite(tomllib.loads(suite_text(contender, batching, epochs, nodes)), "bench")
    from harness.training.runs import perform

    started = time.perf_counter()
    result = perform(expand(suite)[0])
    batching_extras = result.extras.get("batching", {})
    return {
        "contender": contender,
        "batching": batching,
        "epochs": result.epochs,
        "seconds_per_epoch": result.seconds_per_epoch,
        "test_accuracy": result.test_scores["accuracy"],
        "peak_resident_gb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 2**20,
        "tensor_peak_gb": result.peak_mb / 1024,
        "sampled_nodes_per_step": batching_extras.get("sampled_nodes_per_step"),
        "sampled_edges_per_step": batching_extras.get("sampled_edges_per_step"),
        "wall_seconds": time.perf_counter() - started,
    }


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--epochs", type=int, default=3)
    parser.add_argument("--nodes", type=int, default=1_000_000)
    parser.add_argument("--only", nargs=2, metavar=("CONTENDER", "BATCHING"))
    parser.add_argument("--skip", action="append", default=[], help="e.g. gat:full")
    args = parser.parse_args()
    if args.only:
        print(json.dumps(one(*args.only, args.epochs, args.nodes)), flush=True)
        return
    from harness.gate.baseline import cpu_model

    print(f"machine: {cpu_model()}, {platform.system()}, one torch thread per process")
    print(f"{args.nodes:,} nodes, {args.nodes * 5:,} undirected edges, {args.epochs} epochs")
    print("contender  batching  s/epoch  peak RSS GB  tensor GB  test acc  nodes/step  edges/step")
    for contender in CONTENDERS:
        for batching in ("sampled", "full"):
            if f"{contender}:{batching}" in args.skip:
                continue
            command = [sys.executable, __file__, "--only", contender, batching]
            command += ["--epochs", str(args.epochs), "--nodes", str(args.nodes)]
            finished = subprocess.run(command, cwd=ROOT, capture_output=True, text=True)
            if finished.returncode != 0:
                print(f"{contender} {batching}: failed: {finished.stderr.strip()[-300:]}")
                continue
            row = json.loads(finished.stdout.strip().splitlines()[-1])
            nodes = row["sampled_nodes_per_step"]
            edges = row["sampled_edges_per_step"]
            print(
                f"{contender:10} {batching:8} {row['seconds_per_epoch']:8.1f} "
                f"{row['peak_resident_gb']:12.2f} {row['tensor_peak_gb']:10.2f} "
                f"{row['test_accuracy']:9.3f} {nodes or 0:11,.0f} {edges or 0:11,.0f}",
                flush=True,
            )


if __name__ == "__main__":
    main()

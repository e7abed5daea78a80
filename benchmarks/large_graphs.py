"""Seconds per epoch and peak memory on large graphs: Heedful against a textbook PyG loop.

Graphs: the synthetic contextual block model with 100,000 nodes and 1,000,000 undirected edges
(`--size 100k`) or 1,000,000 nodes and 5,000,000 undirected edges (`--size 1m`), 64 features,
5 classes. Contenders: GAT 8 heads x 8, GATv2 8 heads x 8, GCN 64, SAGE 64 (two layers, dropout
0.5, ELU; the attention output layer averages its 8 heads, as Heedful's default); transformer
8 heads x 8 (Shi et al.'s layer with its gated skip); global_attention 64 wide, 4 heads,
performer attention (GPS layers over GINE, each edge's attribute the constant 1).

Loops, each in its own process (so that its peak resident memory is its own), alternating:
- `heedful` and `heedful_compiled`: Heedful's `perform()` of the run, compile = false / true,
  with `kernel = "auto"` (the sparse kernel for attention at these sizes);
- `heedful_scatter`: the same eager run on PyG's scatter layers (`kernel = "scatter"`);
- `heedful_threads`: `heedful` on `--threads` torch threads (default 2) instead of one;
- `textbook` and `textbook_compiled`: a plain full-batch loop written below with PyG's layers at
  their defaults (self-loops added by the layer on every call), Adam, then the same loop with
  `torch.compile(model)`.
Each row also carries this process's copy bandwidth (GB/s, one thread, a 256 MiB tensor) and
the memory-bandwidth estimate of an attention epoch (`bandwidth_seconds`, see `edge_bytes`).
An epoch is one training step plus one validation pass. Seconds per epoch: median of the
measured epochs after warm-up (Heedful: its first epoch, eager and metered, and for compiled
runs the second, which compiles; textbook: the first). Compile seconds: the compiling epoch
minus that median. Each process compiles with an empty compile cache (a first compile).
Peak memory: the process's resident high-water mark (VmHWM) at its end, graph building included.

The printed summary gives each goal's ratio from the rows of the run (medians over rounds),
and at `--size 1m` the peak resident memory of `heedful` over `textbook`.

Run by hand, one heavy job at a time, on a machine nothing else is running on (estimates for
an idle 2-core machine with the sparse kernel's C loops; graph generation included):
    # 100k nodes, GAT and GATv2, Heedful eager/compiled against textbook eager/compiled:
    # about 10 minutes, 5 GB peak per process
    .venv/bin/python benchmarks/large_graphs.py --size 100k --contenders gat,gatv2 \
        --loops heedful,heedful_compiled,textbook,textbook_compiled --epochs 3
    # one thread against two, same graph, alternating in two rounds: about 5 minutes
    .venv/bin/python benchmarks/large_graphs.py --size 100k --contenders gat,gatv2 \
        --loops heedful,heedful_threads --threads 2 --epochs 3 --rounds 2
    # 1M nodes, 5M undirected edges, GAT eager, epochs and peak memory: about 15 minutes,
    # up to 16 GB resident (the textbook loop's): run it alone on the machine
    .venv/bin/python benchmarks/large_graphs.py --size 1m --contenders gat \
        --loops heedful,textbook --epochs 2
"""

from __future__ import annotations

# isort: off
import harness  # noqa: F401  (first: Heedful's OpenMP wait policy must be set before torch loads)

# isort: on
import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import torch
from torch import nn

SIZES = {"10k": (10_000, 20.0), "100k": (100_000, 20.0), "1m": (1_000_000, 10.0)}  # nodes, degree
CONTENDERS = {
    "gat": {"model": "gat", "heads": 8, "hidden": 8},
    "gatv2": {"model": "gatv2", "heads": 8, "hidden": 8},
    "gcn": {"model": "gcn", "hidden": 64},
    "sage": {"model": "sage", "hidden": 64},
    "transformer": {"model": "transformer", "heads": 8, "hidden": 8},
    "global_attention": {
        "model": "global_attention",
        "hidden": 64,
        "heads": 4,
        "attention_kind": "performer",
    },
}
LOOPS = (
    "heedful",
    "heedful_compiled",
    "heedful_scatter",
    "heedful_threads",
    "textbook",
    "textbook_compiled",
)


def suite_for(size: str, contender: str, epochs: int, compile_model: bool, kernel: str = "auto"):
    """A one-run suite: the benchmark graph and one contender, patience that never stops it."""
    from harness.planning import expand, parse_suite

    nodes, degree = SIZES[size]
    raw = {
        "name": f"large_{size}",
        "seeds": [0],
        "data": {
            "source": "synthetic",
            "nodes": nodes,
            "classes": 5,
            "average_degree": degree,
            "feature_dimension": 64,
            "graph_seed": 1,
        },
        "training": {
            "epochs": epochs,
            "patience": epochs,
            "compile": compile_model,
            "kernel": kernel,
        },
        "contenders": {contender: CONTENDERS[contender]},
    }
    return expand(parse_suite(raw, "benchmarks/large_graphs.py"))[0]


def textbook_model(contender: str, classes: int) -> nn.Module:
    """Two PyG layers with their defaults, as a tutorial would write them."""
    from torch_geometric.nn import GATConv, GATv2Conv, GCNConv, SAGEConv, TransformerConv

    if contender == "global_attention":
        return textbook_global(classes)

    class TwoLayers(nn.Module):
        def __init__(self) -> None:
            super().__init__()
            if contender in ("gat", "gatv2"):
                layer = GATConv if contender == "gat" else GATv2Conv
                self.first = layer(64, 8, heads=8)
                self.second = layer(64, classes, heads=8, concat=False)
            elif contender == "transformer":
                self.first = TransformerConv(64, 8, heads=8, beta=True)
                self.second = TransformerConv(64, classes, heads=8, concat=False, beta=True)
            elif contender == "gcn":
                self.first, self.second = GCNConv(64, 64), GCNConv(64, classes)
            else:
                self.first, self.second = SAGEConv(64, 64), SAGEConv(64, classes)

        def forward(self, x, edge_index):
            x = nn.functional.dropout(x, 0.5, self.training)
            x = nn.functional.elu(self.first(x, edge_index))
            x = nn.functional.dropout(x, 0.5, self.training)
            return self.second(x, edge_index)

    return TwoLayers()


def textbook_global(classes: int) -> nn.Module:
    """Two GPS layers over GINE with performer attention, as PyG's example builds them."""
    from torch_geometric.nn import GINEConv, GPSConv

    class GlobalLayers(nn.Module):
        def __init__(self) -> None:
            super().__init__()
            self.entry, self.exit = nn.Linear(64, 64), nn.Linear(64, classes)
            self.layers = nn.ModuleList()
            for _ in range(2):
                mlp = nn.Sequential(nn.Linear(64, 64), nn.ReLU(), nn.Linear(64, 64))
                local = GINEConv(mlp, edge_dim=1)
                self.layers.append(GPSConv(64, local, heads=4, attn_type="performer"))

        def forward(self, x, edge_index):
            ones = torch.ones(edge_index.size(1), 1)
            x = self.entry(nn.functional.dropout(x, 0.5, self.training))
            for index, layer in enumerate(self.layers):
                x = layer(x, edge_index, edge_attr=ones)
                x = nn.functional.elu(x) if index == 0 else x
            return self.exit(x)

    return GlobalLayers()


def textbook_epochs(spec, epochs: int, compile_model: bool) -> list[float]:
    """Seconds of each epoch of the textbook loop on the run's graph and split."""
    from harness.data import load_graph
    from harness.data.splits import make_split

    data = load_graph(spec.data)
    split = make_split(data, spec.split, spec.seed)
    torch.manual_seed(0)
    model = textbook_model(spec.model, int(data.y.max()) + 1)
    network = torch.compile(model) if compile_model else model
    optimizer = torch.optim.Adam(model.parameters(), lr=0.01, weight_decay=5e-4)
    from training_loop import plain_epoch  # the same textbook epoch as the small benchmark

    seconds = []
    for _ in range(epochs):
        started = time.perf_counter()
        plain_epoch(model, network, optimizer, data, split)
        seconds.append(time.perf_counter() - started)
    return seconds


def heedful_epochs(spec, on_epoch_seconds: list[float]) -> dict:
    """Heedful's whole run; the seconds of each epoch from its per-epoch callback."""
    from harness.training.runs import perform

    last = [time.perf_counter()]

    def tick(epoch: int, score: float) -> None:
        now = time.perf_counter()
        on_epoch_seconds.append(now - last[0])
        last[0] = now

    # the graph is built before the first epoch: load it first so the clock starts after it
    from harness.data import load_graph

    load_graph(spec.data)
    last[0] = time.perf_counter()
    result = perform(spec, on_epoch=tick)
    return {"tensor_mb": result.peak_mb, "extras_compile": result.extras["compile"]}


def edge_bytes(spec) -> float:
    """Bytes an attention epoch must move at least, edge-wise: per layer and edge, its source
    index (8 bytes) and per head the score, the weight and the source's C-wide value row read
    once (4 bytes each); backward moves twice the forward's; validation is one more forward
    of the first layer (the last runs on the validation rows' edges only)."""
    nodes = spec.data.nodes
    edges = nodes * spec.data.average_degree + nodes  # directed edges, one self-loop per node
    heads, width = spec.options.heads_per_layer(), [spec.options.hidden, spec.data.classes]
    forward = [edges * (8 + 4 * h * (2 + c)) for h, c in zip(heads, width, strict=True)]
    return 3 * sum(forward) + forward[0]


def copy_gigabytes_per_second() -> float:
    """Read plus write bandwidth of one tensor copy (256 MiB) on this thread, best of three."""
    source = torch.ones(64 * 2**20)
    target = torch.empty_like(source)
    best = float("inf")
    for _ in range(3):
        started = time.perf_counter()
        target.copy_(source)
        best = min(best, time.perf_counter() - started)
    return 2 * source.numel() * 4 / best / 1e9


def peak_resident_mb() -> float:
    for line in Path("/proc/self/status").read_text().splitlines():
        if line.startswith("VmHWM:"):
            return int(line.split()[1]) / 1024
    return float("nan")


def child(size: str, contender: str, loop: str, measured: int, threads: int) -> dict:
    """One loop in this process; prints one JSON line."""
    torch.set_num_threads(threads if loop.endswith("threads") else 1)
    compiled = loop.endswith("compiled")
    warm_up = 1 + (compiled and loop.startswith("heedful"))
    epochs = warm_up + measured
    kernel = "scatter" if loop.endswith("scatter") else "auto"
    spec = suite_for(size, contender, epochs, compiled, kernel)
    row: dict = {"size": size, "contender": contender, "loop": loop, "kernel": spec.training.kernel}
    if contender in ("gat", "gatv2"):
        row["copy_gb_per_s"] = copy_gigabytes_per_second()
        row["bandwidth_seconds"] = edge_bytes(spec) / (row["copy_gb_per_s"] * 1e9)
    if loop.startswith("heedful"):
        seconds: list[float] = []
        row.update(heedful_epochs(spec, seconds))
    else:
        seconds = textbook_epochs(spec, epochs, compiled)
    typical = statistics.median(seconds[warm_up:])
    row["seconds_per_epoch"] = typical
    row["epochs"] = seconds
    row["compile_seconds"] = max(0.0, seconds[warm_up - 1] - typical) if compiled else 0.0
    row["peak_resident_mb"] = peak_resident_mb()
    row["threads"] = torch.get_num_threads()
    row["load_average"] = os.getloadavg()[0]
    return row


RATIOS = {  # name: (numerator loop, denominator loop); seconds per epoch
    "heedful / textbook (goal <= 0.35)": ("heedful", "textbook"),
    "heedful / textbook compiled (goal <= 0.8)": ("heedful", "textbook_compiled"),
    "heedful compiled / heedful (goal <= 1)": ("heedful_compiled", "heedful"),
    "heedful / heedful on scatter": ("heedful", "heedful_scatter"),
    "one thread / more threads (goal >= 1.6 on two)": ("heedful", "heedful_threads"),
}
MEMORY_RATIOS = {  # name: (numerator loop, denominator loop); peak resident memory
    "heedful / textbook peak resident memory (goal <= 0.7 at 1m)": ("heedful", "textbook"),
}


def summary(rows: list[dict]) -> list[str]:
    """The goal ratios per contender, from the rows of one run (medians over rounds)."""
    lines = []
    for contender in dict.fromkeys(row["contender"] for row in rows):
        seconds: dict[str, list[float]] = {}
        for row in rows:
            if row["contender"] == contender and "seconds_per_epoch" in row:
                seconds.setdefault(row["loop"], []).append(row["seconds_per_epoch"])
        typical = {loop: statistics.median(values) for loop, values in seconds.items()}
        for name, (top, bottom) in RATIOS.items():
            if top in typical and bottom in typical:
                lines.append(f"{contender}: {name}: {typical[top] / typical[bottom]:.2f}")
        peaks = {
            loop: statistics.median(
                r["peak_resident_mb"]
                for r in rows
                if r["contender"] == contender and r["loop"] == loop and "peak_resident_mb" in r
            )
            for loop in seconds
        }
        for name, (top, bottom) in MEMORY_RATIOS.items():
            if top in peaks and bottom in peaks:
                lines.append(f"{contender}: {name}: {peaks[top] / peaks[bottom]:.2f}")
        estimate = [
            r["bandwidth_seconds"]
            for r in rows
            if r.get("loop") == "heedful"
            and r["contender"] == contender
            and "bandwidth_seconds" in r
        ]
        if estimate and "heedful" in typical:
            distance = typical["heedful"] / statistics.median(estimate)
            lines.append(f"{contender}: heedful / memory-bandwidth estimate: {distance:.1f}")
    return lines


def run_child(size: str, contender: str, loop: str, measured: int, threads: int) -> dict:
    with tempfile.TemporaryDirectory(prefix="heedful-compile-") as cache:
        environment = {**os.environ, "TORCHINDUCTOR_CACHE_DIR": cache, "HEEDFUL_CACHE": cache}
        arguments = [size, contender, loop, str(measured), str(threads)]
        command = [sys.executable, __file__, "--child", *arguments]
        done = subprocess.run(command, capture_output=True, text=True, env=environment)
    if done.returncode != 0:
        return {"size": size, "contender": contender, "loop": loop, "error": done.stderr[-400:]}
    return json.loads(done.stdout.strip().splitlines()[-1])


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--size", choices=sorted(SIZES), default="100k")
    parser.add_argument("--contenders", default="gat,gatv2")
    parser.add_argument("--loops", default=",".join(LOOPS))
    parser.add_argument("--epochs", type=int, default=3, help="measured epochs after warm-up")
    parser.add_argument("--rounds", type=int, default=1, help="alternating rounds")
    parser.add_argument("--threads", type=int, default=2, help="threads of `heedful_threads`")
    parser.add_argument("--out", default=None, help="JSON lines file to append rows to")
    parser.add_argument("--child", nargs=5, help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.child:
        size, contender, loop, measured, threads = args.child
        print(json.dumps(child(size, contender, loop, int(measured), int(threads))))
        return
    rows = []
    for round_number in range(args.rounds):
        for contender in args.contenders.split(","):
            for loop in args.loops.split(","):
                row = run_child(args.size, contender, loop, args.epochs, args.threads)
                row["round"] = round_number
                rows.append(row)
                print(json.dumps(row), flush=True)
                if args.out:
                    with open(args.out, "a") as handle:
                        handle.write(json.dumps(row) + "\n")
    print("\n".join(summary(rows)))


if __name__ == "__main__":
    main()

"""Seconds per epoch of Heedful's one training loop (fit_nodes) against a plain PyG loop.

Both loops train the same contender (same initial weights) on the same graph and split with
the same Adam settings for the same number of epochs, and both score validation accuracy after
every epoch. Early stopping cannot end either loop early (patience = epochs), so the difference
is Heedful's own bookkeeping: best-weight snapshots, the score curve, the memory meter.
The two validation curves must come out identical; the script says so.

Run by hand (not a test):  .venv/bin/python benchmarks/training_loop.py [--epochs 100]
Goal: ratio Heedful / plain <= 1.05.
"""

from __future__ import annotations

# isort: off
import harness  # noqa: F401  (first: Heedful's OpenMP wait policy must be set before torch loads)

# isort: on
import argparse
import os
import platform
import statistics
import time
from pathlib import Path

import torch
import torch_geometric
from torch import nn

from harness.data import load_graph
from harness.data.splits import make_split
from harness.execution.pool import available_cores
from harness.gate.baseline import cpu_model
from harness.models import build_model
from harness.planning import load_suite
from harness.training.node_loss import fit_nodes

ROOT = Path(__file__).resolve().parents[1]


def plain_epoch(model: nn.Module, network: nn.Module, optimizer, data, split) -> float:
    """One epoch of a textbook full-batch PyG loop: train step, then validation accuracy.
    `network` is the model itself, or the model compiled."""
    model.train()
    optimizer.zero_grad()
    out = network(data.x, data.edge_index)
    loss = nn.functional.cross_entropy(out[split.train], data.y[split.train])
    loss.backward()
    optimizer.step()
    model.eval()
    with torch.no_grad():
        predicted = network(data.x, data.edge_index).argmax(1)[split.validation]
    return float((predicted == data.y[split.validation]).double().mean())


def plain_loop(model: nn.Module, data, split, learning_rate: float, weight_decay: float, epochs):
    """A textbook full-batch PyG loop: train step, then validation accuracy."""
    optimizer = torch.optim.Adam(model.parameters(), lr=learning_rate, weight_decay=weight_decay)
    started = time.perf_counter()
    curve = [plain_epoch(model, model, optimizer, data, split) for _ in range(epochs)]
    return (time.perf_counter() - started) / epochs, curve


def machine_line(threads: int) -> str:
    return (
        f"machine: {cpu_model()}, {os.cpu_count()} cores ({available_cores()} usable), "
        f"torch {torch.__version__} on {threads} threads, PyG {torch_geometric.__version__}, "
        f"Python {platform.python_version()}"
    )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--suite", default=str(ROOT / "suites" / "demo.toml"))
    parser.add_argument("--epochs", type=int, default=100)
    parser.add_argument("--repeats", type=int, default=5, help="alternating timed repeats")
    parser.add_argument(
        "--threads", type=int, default=1, help="torch threads (the command's default is 1)"
    )
    args = parser.parse_args()
    torch.set_num_threads(args.threads)

    suite = load_suite(args.suite)
    data = load_graph(suite.data)
    split = make_split(data, suite.split, 0)
    classes = int(data.y.max()) + 1
    training = suite.training.model_copy(update={"epochs": args.epochs, "patience": args.epochs})

    print(machine_line(args.threads))
    print(
        f"suite {suite.name}: {data.num_nodes} nodes, {data.edge_index.size(1) // 2} edges, "
        f"{args.epochs} epochs, median of {args.repeats} alternating repeats"
    )
    header = f"{'contender':<20}{'model':<7}{'heedful s/epoch':>17}{'plain s/epoch':>15}"
    print(header + f"{'ratio':>8}  curves")
    ratios = []
    for name, options in suite.contenders.items():
        heedful_times, plain_times, same = [], [], True
        for _ in range(args.repeats):
            torch.manual_seed(0)
            model = build_model(options, data.num_features, classes)
            result = fit_nodes(model, data, split, training, "accuracy")
            heedful_times.append(result.seconds_per_epoch)
            torch.manual_seed(0)
            model = build_model(options, data.num_features, classes)
            seconds, curve = plain_loop(
                model, data, split, training.learning_rate, training.weight_decay, args.epochs
            )
            plain_times.append(seconds)
            same = same and curve == result.curve
        heedful, plain = statistics.median(heedful_times), statistics.median(plain_times)
        ratios.append(heedful / plain)
        print(
            f"{name:<20}{options.model:<7}{heedful:>17.5f}{plain:>15.5f}{heedful / plain:>8.3f}"
            f"  {'identical' if same else 'DIFFERENT'}"
        )
    print(f"{'all contenders':<27}{'':>32}{statistics.median(ratios):>8.3f}  (median ratio)")
    print("goal: ratio <= 1.05")


if __name__ == "__main__":
    main()

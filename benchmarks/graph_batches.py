"""Batches of graphs: featurising 50,000 generated molecules, reading them back from Heedful's
cache, and seconds per epoch of Heedful's one training loop against a textbook PyG DataLoader
loop with the same graph-level model.

The molecules are invented by seeded code: chains of 3 to 10 SMILES fragments (benzene,
pyridine and cyclohexane rings, carbonyl, amine, ether oxygen, sulfonyl, difluoromethylene),
kept when RDKit parses them, distinct by RDKit's canonical SMILES. A molecule is labelled
"polar" when its topological polar surface area (Ertl et al., 2000; RDKit's
rdMolDescriptors.CalcTPSA) is at least 70 square angstroms (about the
median of the chains), else "apolar".

Both loops train the same model (harness.models.graph_level.build_graph_model, same initial
weights) on the same shuffled batches (same batch size, same generator seed) with the same Adam
settings for the same epochs, and score the validation graphs in batches after every epoch.
Early stopping cannot end either loop early (patience = epochs); the two validation curves
must come out identical, and the script says so.

Run by hand (not a test):  .venv/bin/python benchmarks/graph_batches.py [--molecules 50000]
Goals: from the cache under 5 s; Heedful / textbook seconds per epoch <= 1.05.
"""

from __future__ import annotations

# isort: off
import harness  # noqa: F401  (first: Heedful's OpenMP wait policy must be set before torch loads)

# isort: on
import argparse
import copy
import os
import statistics
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd
import torch
from rdkit import Chem, RDLogger
from rdkit.Chem import rdMolDescriptors
from sklearn.metrics import f1_score
from torch import nn
from torch_geometric.loader import DataLoader
from training_loop import machine_line  # a sibling script of benchmarks/

from harness.data.molecules import load_molecules
from harness.planning import HOP_CACHE_VARIABLE, expand, load_suite
from harness.training.graph_loss import prepare_graph_run
from harness.training.loop import fit
from harness.training.resources import peak_resident_mb

SEED = 50
FRAGMENTS = [
    "c1ccc(cc1)",
    "C(=O)",
    "N",
    "O",
    "C1CCC(CC1)",
    "c1ccc(nc1)",
    "S(=O)(=O)",
    "C(F)(F)",
]
POLAR_TPSA = 70.0  # square angstroms, about the median of the generated chains

SUITE = """\
name = "graph_batches"
task = "graph_classification"
seeds = 1
metric = "macro_f1"

[data]
source = "molecules"
file = "molecules.csv"
label_column = "polarity"

[split]
train = 0.8
validation = 0.1
test = 0.1

[graphs]
batch_size = {batch_size}

[training]
epochs = {epochs}
patience = {epochs}
learning_rate = 0.01

[contenders.attention]
model = "gat"
heads = 4
hidden = 8
readout = "attention"
"""


def generated_molecules(count: int, seed: int) -> pd.DataFrame:
    """`count` distinct molecules (canonical SMILES) with their polarity label."""
    RDLogger.DisableLog("rdApp.*")  # chains RDKit refuses (an over-bonded sulfur) are dropped
    rng = np.random.default_rng(seed)
    rows: dict[str, str] = {}
    while len(rows) < count:
        length = int(rng.integers(3, 11))
        text = "".join(FRAGMENTS[i] for i in rng.integers(0, len(FRAGMENTS), length))
        molecule = Chem.MolFromSmiles(text)
        if molecule is None:
            continue
        polar = rdMolDescriptors.CalcTPSA(molecule) >= POLAR_TPSA
        rows.setdefault(Chem.MolToSmiles(molecule), "polar" if polar else "apolar")
    return pd.DataFrame({"smiles": list(rows), "polarity": list(rows.values())})


def validation_score(model: nn.Module, loader: DataLoader) -> float:
    """Macro-F1 of the validation graphs, as Heedful's objective scores it."""
    # one pass: each pass over a loader without a generator draws from torch's global one
    with torch.no_grad():
        batches = [(model(b.x, b.edge_index, b.batch, b.num_graphs), b.y) for b in loader]
    logits, truth = (torch.cat(parts) for parts in zip(*batches, strict=True))
    chosen = torch.softmax(logits.double(), dim=1).argmax(1)
    return float(f1_score(truth.numpy(), chosen.numpy(), average="macro"))


def textbook_loop(model: nn.Module, collection, split, options, training, seed: int):
    """A textbook PyG loop: shuffled DataLoader batches, Adam, validation after every epoch."""
    optimizer = torch.optim.Adam(
        model.parameters(), lr=training.learning_rate, weight_decay=training.weight_decay
    )
    dataset = collection.dataset()
    generator = torch.Generator().manual_seed(seed)
    train = DataLoader(
        dataset.index_select(split.train), options.batch_size, shuffle=True, generator=generator
    )
    validation = DataLoader(dataset.index_select(split.validation), options.evaluation_batch_size)
    started, curve = time.perf_counter(), []
    for _ in range(training.epochs):
        model.train()
        for batch in train:
            optimizer.zero_grad()
            logits = model(batch.x, batch.edge_index, batch.batch, batch.num_graphs)
            nn.functional.cross_entropy(logits, batch.y).backward()
            optimizer.step()
        model.eval()
        curve.append(validation_score(model, validation))
    return (time.perf_counter() - started) / training.epochs, curve


def timed_load(spec_data) -> tuple[float, float, object]:
    """Wall and processor seconds to read the molecules, past load_graph's per-process memo
    (so the disk cache is what the second call measures); on a shared, busy machine the
    processor seconds are what the code itself costs."""
    started, processor = time.perf_counter(), time.process_time()
    collection = load_molecules(spec_data)
    return time.perf_counter() - started, time.process_time() - processor, collection


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--molecules", type=int, default=50_000)
    parser.add_argument("--epochs", type=int, default=3)
    parser.add_argument("--batch-size", type=int, default=64)
    parser.add_argument("--repeats", type=int, default=2, help="alternating timed repeats")
    parser.add_argument("--threads", type=int, default=1, help="torch threads (default 1)")
    args = parser.parse_args()
    torch.set_num_threads(args.threads)
    print(machine_line(args.threads))
    with tempfile.TemporaryDirectory(prefix="graph-batches-") as folder:
        os.environ[HOP_CACHE_VARIABLE] = str(Path(folder) / "cache")  # a cold cache
        started = time.perf_counter()
        molecules = generated_molecules(args.molecules, SEED)
        molecules.to_csv(Path(folder) / "molecules.csv", index=False)
        print(
            f"{len(molecules)} generated molecules in {time.perf_counter() - started:.1f} s: "
            f"{molecules['polarity'].value_counts().to_dict()}"
        )
        suite_file = Path(folder) / "suite.toml"
        suite_file.write_text(SUITE.format(batch_size=args.batch_size, epochs=args.epochs))
        spec = expand(load_suite(suite_file))[0]
        featurised, featurised_cpu, _ = timed_load(spec.data)
        cached, cached_cpu, collection = timed_load(spec.data)
        nodes = int(collection.node_counts().sum())
        print(f"featurised once: {featurised:.1f} s, {featurised_cpu:.1f} s cpu ({nodes} atoms)")
        print(f"from the cache: {cached:.2f} s, {cached_cpu:.2f} s cpu (goal < 5 s)")
        heedful_times, textbook_times, same = [], [], True
        for _ in range(args.repeats):
            prepared = prepare_graph_run(spec, collection, validation_only=False)
            initial = copy.deepcopy(prepared.model)
            random_state = torch.get_rng_state()  # dropout draws from it: both loops alike
            result = fit(prepared.model, prepared.feed, prepared.objective, spec.training)
            heedful_times.append(result.seconds_per_epoch)
            torch.set_rng_state(random_state)
            seconds, curve = textbook_loop(
                initial,
                prepared.objective.collection,
                prepared.objective.split,
                spec.link,
                spec.training,
                spec.seed,
            )
            textbook_times.append(seconds)
            same = same and np.allclose(curve, result.curve, rtol=0, atol=1e-12)
    heedful, textbook = statistics.median(heedful_times), statistics.median(textbook_times)
    training_graphs = len(prepared.objective.split.train)
    print(
        f"{args.epochs} epochs of {training_graphs} training graphs, batch size "
        f"{args.batch_size}, median of {args.repeats} alternating repeats"
    )
    print(f"{'loop':<10}{'s/epoch':>10}{'graphs/s':>11}")
    for name, value in (("heedful", heedful), ("textbook", textbook)):
        print(f"{name:<10}{value:>10.2f}{training_graphs / value:>11.0f}")
    curves = "identical" if same else "DIFFERENT"
    print(f"ratio heedful / textbook: {heedful / textbook:.3f} (goal <= 1.05); curves {curves}")
    print(f"peak resident memory: {peak_resident_mb():.0f} MiB")


if __name__ == "__main__":
    main()

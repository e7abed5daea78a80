"""Splits of graph collections: stratified fractions by graph, the data's column, scaffold and
size splits."""

from __future__ import annotations

import numpy as np
import pytest
import torch

from harness.data import load_graph
from harness.data.graph_splits import make_graph_split
from harness.errors import InputError
from harness.schema.graph_data import MoleculeData, MotifGraphsData
from harness.schema.splits import ColumnSplit, FractionSplit, ScaffoldSplit, SizeSplit
from tests.graph_files import molecule_frame, write_molecules


@pytest.fixture(autouse=True)
def cache_folder(tmp_path, monkeypatch):
    monkeypatch.setenv("HEEDFUL_CACHE", str(tmp_path / "cache"))


def motifs(**options):
    return load_graph(MotifGraphsData(source="synthetic_graphs", graphs=80, **options))


def parts(split) -> list[set[int]]:
    return [set(part.tolist()) for part in (split.train, split.validation, split.test)]


def test_fractions_split_graphs_stratified_and_disjoint():
    collection = motifs()
    split = make_graph_split(collection, FractionSplit(), seed=3)
    train, validation, test = parts(split)
    assert not (train & validation or train & test or validation & test)
    assert (len(train), len(validation), len(test)) == (40, 20, 20)
    assert torch.bincount(collection.y[split.test]).tolist() == [5, 5, 5, 5]
    assert parts(make_graph_split(collection, FractionSplit(), seed=3)) == [train, validation, test]


def test_size_split_tests_on_the_largest_graphs():
    collection = motifs(tree_nodes_min=4, tree_nodes_max=40)
    split = make_graph_split(collection, SizeSplit(), seed=0)
    sizes = collection.node_counts()
    assert len(split.test) == 16 and len(split.train) + len(split.validation) == 64
    assert sizes[split.test].min() >= sizes[torch.cat([split.train, split.validation])].max()
    other = make_graph_split(collection, SizeSplit(), seed=1)
    assert not torch.equal(split.train, other.train)  # train and validation drawn per seed


def test_scaffold_split_keeps_each_scaffold_in_one_part(tmp_path):
    collection = load_graph(MoleculeData(source="molecules", file=str(write_molecules(tmp_path))))
    spec = ScaffoldSplit(train=0.5, validation=0.25, test=0.25)
    for seed in range(5):
        split = make_graph_split(collection, spec, seed)
        groups = [{collection.scaffolds[i] for i in part} for part in parts(split)]
        assert not (groups[0] & groups[1] or groups[0] & groups[2] or groups[1] & groups[2])
        assert sum(map(len, parts(split))) == len(collection)


def test_scaffold_split_needs_molecules():
    with pytest.raises(InputError, match="'scaffold' needs molecules"):
        make_graph_split(motifs(), ScaffoldSplit(), seed=0)


def test_scaffold_split_with_too_few_scaffolds_says_so(tmp_path):
    rows = molecule_frame().iloc[[4, 5, 6, 7, 0, 1]]  # benzene scaffold four times, two chains
    collection = load_graph(
        MoleculeData(source="molecules", file=str(write_molecules(tmp_path, rows)))
    )
    with pytest.raises(InputError, match=r"leaves '(validation|test)' empty \(2 distinct"):
        make_graph_split(collection, ScaffoldSplit(), seed=0)


def test_column_split_of_molecules(tmp_path):
    rows = molecule_frame()
    rows["part"] = np.resize(["train", "train", "validation", "test"], len(rows))
    spec = MoleculeData(
        source="molecules", file=str(write_molecules(tmp_path, rows)), split_column="part"
    )
    split = make_graph_split(load_graph(spec), ColumnSplit(method="column"), seed=0)
    assert split.validation.tolist() == list(range(2, len(rows), 4))


def test_a_class_without_training_graphs_is_named(tmp_path):
    rows = molecule_frame()
    ring_part = np.resize(["train", "validation"], len(rows))
    rows["part"] = np.where(rows["label"] == "chain", "test", ring_part)
    spec = MoleculeData(
        source="molecules", file=str(write_molecules(tmp_path, rows)), split_column="part"
    )
    with pytest.raises(InputError, match="class 'chain' has no training graph"):
        make_graph_split(load_graph(spec), ColumnSplit(method="column"), seed=0)

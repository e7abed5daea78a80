"""Graph collections checked against outside references: RDKit for molecules and scaffolds,
networkx's graph atlas and spectral graph theory for the atlas labels."""

from __future__ import annotations

import networkx as nx
import numpy as np
import pytest
from rdkit import Chem
from rdkit.Chem.Scaffolds import MurckoScaffold

from harness.data import load_graph
from harness.data.graph_splits import make_graph_split
from harness.schema.graph_data import AtlasData, MoleculeData
from harness.schema.splits import ScaffoldSplit
from tests.graph_files import SMILES, write_molecules


@pytest.fixture(autouse=True)
def cache_folder(tmp_path, monkeypatch):
    monkeypatch.setenv("HEEDFUL_CACHE", str(tmp_path / "cache"))


def test_node_count_is_rdkits_heavy_atom_count(tmp_path):
    """RDKit as reference: `Mol.GetNumHeavyAtoms()` for every row."""
    collection = load_graph(MoleculeData(source="molecules", file=str(write_molecules(tmp_path))))
    expected = [Chem.MolFromSmiles(s).GetNumHeavyAtoms() for s in SMILES]
    assert collection.node_counts().tolist() == expected
    bonds = [Chem.MolFromSmiles(s).GetNumBonds() for s in SMILES]
    assert (collection.edge_counts() // 2).tolist() == bonds


def test_scaffold_split_against_scaffolds_recomputed_with_rdkit(tmp_path):
    """Bemis and Murcko (1996) scaffolds recomputed independently: RDKit's
    `GetScaffoldForMol`, written as canonical SMILES; no scaffold may span two parts."""
    collection = load_graph(MoleculeData(source="molecules", file=str(write_molecules(tmp_path))))
    reference = [
        Chem.MolToSmiles(MurckoScaffold.GetScaffoldForMol(Chem.MolFromSmiles(s))) for s in SMILES
    ]
    for seed in range(4):
        split = make_graph_split(
            collection, ScaffoldSplit(train=0.5, validation=0.25, test=0.25), seed
        )
        seen = [{reference[i] for i in part.tolist()} for part in split.__dict__.values()]
        assert not (seen[0] & seen[1] or seen[0] & seen[2] or seen[1] & seen[2])


def test_atlas_holds_every_graph_networkx_lists():
    """Read and Wilson (1998) list 1,253 graphs with up to seven nodes; networkx ships them.
    Heedful keeps all but the null graph."""
    assert len(nx.graph_atlas_g()) == 1253
    collection = load_graph(AtlasData(source="graph_atlas"))
    assert len(collection) == 1252 and len(collection.skipped) == 1
    expected = [g.number_of_nodes() for g in nx.graph_atlas_g()[1:]]
    assert collection.node_counts().tolist() == expected


def adjacency(collection, index: int) -> np.ndarray:
    graph = collection.graph(index)
    matrix = np.zeros((graph.num_nodes, graph.num_nodes))
    matrix[graph.edge_index[0].numpy(), graph.edge_index[1].numpy()] = 1
    return matrix


def test_triangle_free_labels_against_the_trace_of_a_cubed():
    """The number of triangles of a simple graph is trace(A^3) / 6 (a standard identity of
    algebraic graph theory, e.g. Biggs, Algebraic Graph Theory, 1993)."""
    collection = load_graph(AtlasData(source="graph_atlas", label="triangle_free"))
    for index in range(len(collection)):
        a = adjacency(collection, index)
        triangle_free = np.trace(np.linalg.matrix_power(a, 3)) == 0
        assert collection.y[index].item() == int(triangle_free)


def test_bipartite_labels_against_a_symmetric_spectrum():
    """A graph is bipartite exactly when its adjacency spectrum is symmetric about 0 (Coulson
    and Rushbrooke, 1940, and its converse; Cvetković, Doob and Sachs, Spectra of Graphs)."""
    collection = load_graph(AtlasData(source="graph_atlas", label="bipartite"))
    for index in range(len(collection)):
        eigenvalues = np.sort(np.linalg.eigvalsh(adjacency(collection, index)))
        symmetric = np.allclose(eigenvalues, -eigenvalues[::-1], atol=1e-8)
        assert collection.y[index].item() == int(symmetric)

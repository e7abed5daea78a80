"""Sources of many graphs: molecules, graph tables, planted motifs, the atlas; their caches and
row-level errors."""

from __future__ import annotations

import pandas as pd
import pytest
import torch

from harness.data import load_graph
from harness.data.collection import load_cached, save_cached
from harness.data.molecules import cache_file, load_molecules
from harness.errors import InputError
from harness.schema.graph_data import GraphTablesData, MoleculeData, MotifGraphsData
from tests.graph_files import SMILES, molecule_frame, write_graph_tables, write_molecules


@pytest.fixture(autouse=True)
def cache_folder(tmp_path, monkeypatch):
    monkeypatch.setenv("HEEDFUL_CACHE", str(tmp_path / "cache"))


def molecules(path, **options) -> MoleculeData:
    return MoleculeData(source="molecules", file=str(path), **options)


def test_molecules_become_graphs_with_bond_attributes(tmp_path):
    collection = load_molecules(molecules(write_molecules(tmp_path)))
    assert len(collection) == len(SMILES)
    assert collection.class_names == ["chain", "ring"]
    assert collection.y.tolist() == [int(any(c.isdigit() for c in s)) for s in SMILES]
    ethanol = collection.graph(0)
    assert ethanol.num_nodes == 3 and ethanol.edge_index.size(1) == 4  # two bonds, both ways
    assert ethanol.edge_attr.size(0) == 4 and ethanol.x.sum(1).eq(9).all()  # nine one-hot blocks
    assert collection.scaffolds[0] == "" and collection.scaffolds[4] == "c1ccccc1"


def test_an_unparsable_smiles_names_its_row_and_string(tmp_path):
    rows = molecule_frame()
    rows.loc[3, "smiles"] = "C1CC(("
    with pytest.raises(InputError) as caught:
        load_molecules(molecules(write_molecules(tmp_path, rows)))
    assert str(caught.value) == (
        f"{tmp_path / 'dyes.csv'}: row 4 (line 5): column 'smiles' holds SMILES 'C1CC((' that "
        'RDKit cannot parse; allowed: a valid SMILES string, or invalid_rows = "skip"'
    )


def test_skipped_rows_are_counted_and_labels_stay_with_their_rows(tmp_path):
    rows = molecule_frame()
    rows.loc[[2, 7], "smiles"] = ["not-a-molecule", "[H][H]"]
    collection = load_molecules(molecules(write_molecules(tmp_path, rows), invalid_rows="skip"))
    assert len(collection) == len(SMILES) - 2
    assert len(collection.skipped) == 2 and "row 3" in collection.skipped[0]
    assert "without heavy atoms" in collection.skipped[1]
    kept = rows.drop(index=[2, 7])
    assert collection.y.tolist() == (kept["label"] == "ring").astype(int).tolist()


def test_an_empty_label_names_its_row(tmp_path):
    rows = molecule_frame()
    rows.loc[5, "label"] = None
    with pytest.raises(InputError, match=r"row 6 \(line 7\): column 'label' is empty"):
        load_molecules(molecules(write_molecules(tmp_path, rows)))


def test_parsed_molecules_come_from_the_cache_the_second_time(tmp_path, monkeypatch):
    spec = molecules(write_molecules(tmp_path))
    first = load_molecules(spec)
    path, _ = cache_file(spec)
    assert path.is_file()

    def refuse(*_):
        raise AssertionError("parsed again although cached")

    monkeypatch.setattr("harness.data.molecules.parse_molecules", refuse)
    again = load_molecules(spec)
    assert torch.equal(first.storage.x, again.storage.x) and first.scaffolds == again.scaffolds


def test_a_damaged_cache_file_is_named_and_rebuilt(tmp_path):
    spec = molecules(write_molecules(tmp_path))
    expected = load_molecules(spec)
    path, key = cache_file(spec)
    path.write_bytes(b"not a cache file")
    with pytest.warns(UserWarning, match="cached graphs not used"):
        rebuilt = load_molecules(spec)
    assert torch.equal(rebuilt.storage.x, expected.storage.x)
    assert load_cached(path, key) is not None  # written anew


def test_a_cache_file_of_other_content_is_not_believed(tmp_path):
    spec = molecules(write_molecules(tmp_path))
    collection = load_molecules(spec)
    path, key = cache_file(spec)
    save_cached(collection, path, "another file's key")
    with pytest.warns(UserWarning, match="made for other content"):
        assert load_cached(path, key) is None


def test_graph_tables_join_nodes_edges_and_graphs(tmp_path):
    paths = write_graph_tables(tmp_path)
    spec = GraphTablesData(source="graph_tables", **{k: str(v) for k, v in paths.items()})
    collection = load_graph(spec)
    assert collection.class_names == ["closed", "open"]
    assert collection.y.tolist() == [0, 1, 0]
    assert collection.node_counts().tolist() == [3, 3, 4]
    assert collection.edge_counts().tolist() == [6, 4, 8]  # undirected: both ways
    square = collection.graph(2)
    assert square.edge_index.max() == 3 and square.x[:, 0].tolist() == [0.5] * 4


@pytest.mark.parametrize(
    ("table", "change", "message"),
    [
        (
            "edges",
            {"target": "q", "row": 4},
            "row 5 (line 6): target 'q' is not a node of graph 'p'",
        ),
        ("nodes", {"graph": "zz", "row": 0}, "row 1 (line 2): graph 'zz' (column 'graph') is not"),
        ("nodes", {"id": "b", "row": 0}, "row 2 (line 3): node 'b' repeats in graph 't'"),
        ("graphs", {"graph": "t", "row": 1}, "row 2 (line 3): graph 't' is listed twice"),
        ("graphs", {"label": None, "row": 1}, "row 2 (line 3): column 'label' is empty"),
    ],
)
def test_graph_table_errors_name_file_and_row(tmp_path, table, change, message):
    paths = write_graph_tables(tmp_path)
    frame = pd.read_csv(paths[table])
    row = change.pop("row")
    for column, value in change.items():
        frame.loc[row, column] = value
    frame.to_csv(paths[table], index=False)
    spec = GraphTablesData(source="graph_tables", **{k: str(v) for k, v in paths.items()})
    with pytest.raises(InputError) as caught:
        load_graph(spec)
    assert f"{table}.csv: {message}" in str(caught.value)


def test_a_graph_without_nodes_is_refused(tmp_path):
    paths = write_graph_tables(tmp_path)
    graphs = pd.read_csv(paths["graphs"])
    pd.concat([graphs, pd.DataFrame({"graph": ["e"], "label": ["open"]})]).to_csv(
        paths["graphs"], index=False
    )
    spec = GraphTablesData(source="graph_tables", **{k: str(v) for k, v in paths.items()})
    with pytest.raises(InputError, match="graph 'e' has no nodes"):
        load_graph(spec)


def test_motif_graphs_are_seeded_and_balanced():
    spec = MotifGraphsData(source="synthetic_graphs", graphs=40, class_balance=[1, 1, 1, 1])
    first, again = load_graph(spec), load_graph(spec.model_copy(update={"graph_seed": 0}))
    assert torch.equal(first.storage.edge_index, again.storage.edge_index)
    assert first.y.bincount().tolist() == [10, 10, 10, 10]
    other = load_graph(spec.model_copy(update={"graph_seed": 1}))
    assert not torch.equal(first.storage.x[:50], other.storage.x[:50])


def test_each_motif_class_carries_its_motif():
    """A 5-clique holds C(5,3) = 10 triangles; trees and the other motifs hold at most the house's
    one (networkx counts)."""
    import networkx as nx
    from torch_geometric.utils import to_networkx

    spec = MotifGraphsData(source="synthetic_graphs", graphs=24)
    collection = load_graph(spec)
    for index in range(len(collection)):
        graph = to_networkx(collection.graph(index), to_undirected=True)
        triangles = sum(nx.triangles(graph).values()) // 3
        motif = spec.motifs[int(collection.y[index])]
        assert triangles == {"clique": 10, "house": 1}.get(motif, 0)


def test_motif_schema_refuses_a_balance_of_the_wrong_length():
    with pytest.raises(ValueError, match="class_balance has 2 entries; allowed: one per motif"):
        MotifGraphsData(source="synthetic_graphs", class_balance=[1, 2])

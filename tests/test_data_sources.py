"""The data-source registry: every source gives a graph of the same shape (data/__init__.py)."""

from __future__ import annotations

from pathlib import Path

import pytest
import torch
from torch_geometric.utils import coalesce, is_undirected

from harness.data import SOURCES
from harness.planning import parse_suite
from tests.graph_files import write_graph_tables, write_molecules

NODES = "id,label,f1,f2\na,0,1.0,0.0\nb,0,0.9,0.1\nc,1,0.1,0.9\nd,1,0.0,1.0\ne,,0.5,0.5\n"
EDGES = "source,target\na,b\nb,c\nc,d\nd,e\ne,a\n"
EXAMPLES = {
    "synthetic": {"source": "synthetic", "nodes": 40, "classes": 2, "average_degree": 3.0},
    "tables": {"source": "tables", "nodes": "nodes.csv", "edges": "edges.csv"},
    "karate": {"source": "karate"},
    "digits": {"source": "digits"},
    "pyg": None,  # downloads its dataset (no network in tests); see tests/test_bundled.py
}
# sources of many small graphs (graph classification): each graph has the shape above
COLLECTION_EXAMPLES = {
    "molecules": {"source": "molecules", "file": "dyes.csv"},
    "graph_tables": {
        "source": "graph_tables",
        "nodes": "nodes.csv",
        "edges": "edges.csv",
        "graphs": "graphs.csv",
    },
    "synthetic_graphs": {"source": "synthetic_graphs", "graphs": 12},
    "graph_atlas": {"source": "graph_atlas"},
}


def test_every_source_has_an_example() -> None:
    assert set(EXAMPLES) | set(COLLECTION_EXAMPLES) == set(SOURCES)


@pytest.mark.parametrize("name", sorted(COLLECTION_EXAMPLES))
def test_every_collection_source_gives_graphs_of_that_shape(
    name: str, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setenv("HEEDFUL_CACHE", str(tmp_path / "cache"))
    write_molecules(tmp_path)
    write_graph_tables(tmp_path)
    raw = {
        "name": "shape",
        "task": "graph_classification",
        "data": COLLECTION_EXAMPLES[name],
        "contenders": {"plain": {"model": "mlp"}},
    }
    section = parse_suite(raw, str(tmp_path / "suite.toml")).data
    collection = SOURCES[name](section)
    assert len(collection.class_names) >= 2 and collection.y.shape == (len(collection),)
    for index in range(0, len(collection), max(1, len(collection) // 25)):
        graph = collection.graph(index)
        nodes = graph.num_nodes
        assert graph.x.dtype == torch.float32 and graph.x.size(0) == nodes and nodes > 0
        assert graph.y.shape == (1,) and 0 <= int(graph.y) < len(collection.class_names)
        edges = graph.edge_index
        assert edges.dtype == torch.int64 and (edges.numel() == 0 or int(edges.max()) < nodes)
        assert not bool((edges[0] == edges[1]).any())
        assert is_undirected(edges, num_nodes=nodes)
        assert torch.equal(coalesce(edges, num_nodes=nodes), edges)


@pytest.mark.parametrize("name", sorted(name for name, raw in EXAMPLES.items() if raw))
def test_every_source_gives_the_same_kind_of_graph(name: str, tmp_path: Path) -> None:
    (tmp_path / "nodes.csv").write_text(NODES, encoding="utf-8")
    (tmp_path / "edges.csv").write_text(EDGES, encoding="utf-8")
    raw = {"name": "shape", "data": EXAMPLES[name], "contenders": {"plain": {"model": "mlp"}}}
    section = parse_suite(raw, str(tmp_path / "suite.toml")).data
    data = SOURCES[name](section)
    nodes = data.num_nodes
    assert data.x.dtype == torch.float32 and data.x.size(0) == nodes
    assert data.y.dtype == torch.int64 and data.y.shape == (nodes,) and int(data.y.min()) >= -1
    edges = data.edge_index
    assert edges.dtype == torch.int64 and int(edges.max()) < nodes
    assert not bool((edges[0] == edges[1]).any())  # no self-loops
    assert is_undirected(edges, num_nodes=nodes)
    assert torch.equal(coalesce(edges, num_nodes=nodes), edges)  # sorted, no repeats

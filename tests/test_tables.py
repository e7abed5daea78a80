"""Table source: a fictional courier network's depots (nodes) and routes (edges) as CSV/Parquet.

Each defect named in the data contract is written into a small file, and the one-line error is
checked for the file, the row or column, and what is allowed.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from harness.cli import main
from harness.data.assemble import require_labels
from harness.data.tables import load_tables
from harness.errors import InputError
from harness.planning import parse_suite

NODES = """\
id,label,split,f_parcels,f_vans
d1,express,train,3.0,1
d2,express,validation,2.5,2
d3,freight,train,0.5,4
d4,freight,test,0.2,5
d5,,,1.0,3
"""
EDGES = """\
source,target,weight
d1,d2,1.0
d2,d3,2.0
d3,d4,1.5
d4,d5,1.0
d5,d1,0.5
"""


def table_section(folder: Path, **options: object) -> object:
    data = {"source": "tables", "nodes": "nodes.csv", "edges": "edges.csv", **options}
    raw = {
        "name": "depots",
        "data": data,
        "contenders": {"convolution": {"model": "gcn"}},
    }
    return parse_suite(raw, str(folder / "suite.toml")).data


def write(folder: Path, nodes: str = NODES, edges: str = EDGES) -> Path:
    (folder / "nodes.csv").write_text(nodes, encoding="utf-8")
    (folder / "edges.csv").write_text(edges, encoding="utf-8")
    return folder


def load_error(folder: Path, **options: object) -> str:
    """The one-line error of loading the tables for a task that reads node labels (tasks that
    read none accept a table without usable labels: tests/test_link_tables.py)."""
    with pytest.raises(InputError) as caught:
        require_labels(load_tables(table_section(folder, **{"split_column": "split", **options})))
    message = str(caught.value)
    assert "\n" not in message
    return message


def test_csv_tables_load_as_a_clean_graph(tmp_path: Path) -> None:
    data = load_tables(table_section(write(tmp_path), split_column="split", weight_column="weight"))
    assert data.num_nodes == 5
    assert data.edge_index.size(1) == 10  # five undirected edges, both directions
    assert data.is_undirected()
    assert data.x.dtype.is_floating_point and data.x.shape == (5, 2)  # f_* columns by default
    assert data.y.tolist() == [0, 0, 1, 1, -1]  # sorted class names, empty label = -1
    assert data.class_names == ["express", "freight"]
    assert data.split_part.tolist() == [0, 1, 0, 2, -1]
    assert sorted(data.edge_weight.tolist()) == sorted([1.0, 2.0, 1.5, 1.0, 0.5] * 2)


def test_features_by_list_or_prefix(tmp_path: Path) -> None:
    write(tmp_path)
    listed = load_tables(table_section(tmp_path, feature_columns=["f_vans"], split_column="split"))
    assert listed.x[:, 0].tolist() == [1, 2, 4, 5, 3]
    prefixed = load_tables(table_section(tmp_path, feature_prefix="f_", split_column="split"))
    assert prefixed.x.shape == (5, 2)


def test_self_loops_and_repeats_are_counted_and_removed(tmp_path: Path) -> None:
    edges = EDGES + "d1,d1,1.0\nd2,d1,1.0\nd1,d2,1.0\n"  # a loop, (d2,d1) and (d1,d2) again
    data = load_tables(table_section(write(tmp_path, edges=edges), split_column="split"))
    assert data.self_loops_removed == 1
    assert data.duplicate_edges_removed == 2
    assert data.edge_index.size(1) == 10


def test_directed_edges_are_kept_as_given(tmp_path: Path) -> None:
    data = load_tables(table_section(write(tmp_path), directed=True, split_column="split"))
    assert data.edge_index.size(1) == 5
    assert not data.is_undirected()


def test_check_and_describe_count_directed_edges_once_each(tmp_path: Path, capsys) -> None:
    write(tmp_path)
    suite = tmp_path / "suite.toml"
    suite.write_text(
        'name = "depots"\n[data]\nsource = "tables"\nnodes = "nodes.csv"\nedges = "edges.csv"\n'
        'directed = true\nsplit_column = "split"\n[split]\nmethod = "column"\n'
        '[contenders.convolution]\nmodel = "gcn"\n',
        encoding="utf-8",
    )
    assert main(["check", str(suite)]) == 0
    assert "5 nodes, 5 edges" in capsys.readouterr().out  # the five rows of EDGES
    assert main(["describe", str(suite), "--format", "json"]) == 0
    assert '"edges": 5' in capsys.readouterr().out


def test_parquet_tables_and_integer_ids(tmp_path: Path) -> None:
    nodes = pd.DataFrame({"id": [10, 20, 30], "label": [1, 2, 1], "x0": [0.1, 0.2, 0.3]})
    edges = pd.DataFrame({"source": [10, 20], "target": [20, 30]})
    nodes.to_parquet(tmp_path / "nodes.parquet")
    edges.to_parquet(tmp_path / "edges.parquet")
    raw = {
        "name": "depots",
        "data": {"source": "tables", "nodes": "nodes.parquet", "edges": "edges.parquet"},
        "contenders": {"convolution": {"model": "gcn"}},
    }
    data = load_tables(parse_suite(raw, str(tmp_path / "suite.toml")).data)
    assert data.num_nodes == 3 and data.edge_index.size(1) == 4
    assert data.class_names == ["1", "2"]


def test_the_run_key_follows_the_file_content(tmp_path: Path) -> None:
    before = table_section(write(tmp_path)).content_digest
    write(tmp_path, edges=EDGES + "d1,d3,1.0\n")
    assert table_section(tmp_path).content_digest != before


DEFECTS = [
    # (what, nodes text, edges text, options, expected pieces of the message)
    (
        "unknown node id",
        NODES,
        EDGES + "d1,d9,1.0\n",
        {},
        ["edges.csv: row 6 (line 7)", "target 'd9'", "not a node id in", "nodes.csv"],
    ),
    (
        "duplicate node id",
        NODES + "d2,freight,,1.0,1\n",
        EDGES,
        {},
        ["nodes.csv: row 6 (line 7)", "node id 'd2' repeats row 2", "unique ids"],
    ),
    (
        "NaN feature",
        NODES.replace("0.5,4", ",4"),
        EDGES,
        {},
        ["nodes.csv: row 3 (line 4)", "column 'f_parcels'", "NaN or empty", "finite numbers"],
    ),
    (
        "infinite feature",
        NODES.replace("0.2,5", "inf,5"),
        EDGES,
        {},
        ["nodes.csv: row 4 (line 5)", "column 'f_parcels'", "infinite", "finite numbers"],
    ),
    (
        "non-numeric feature column",
        NODES.replace("d3,freight,train,0.5,4", "d3,freight,train,0.5,many"),
        EDGES,
        {},
        ["nodes.csv: column 'f_vans' is not numeric", "row 3 holds 'many'", "numbers"],
    ),
    (
        "fewer than two label classes",
        NODES.replace("freight", "express"),
        EDGES,
        {},
        ["nodes.csv: column 'label'", "fewer than two label classes", "only 'express'"],
    ),
    (
        "empty edge file",
        NODES,
        "",
        {},
        ["edges.csv: the file is empty", "one row per edge"],
    ),
    (
        "edge file with only a header",
        NODES,
        "source,target,weight\n",
        {},
        ["edges.csv: no rows after the header", "one row per edge"],
    ),
    (
        "missing column",
        NODES,
        EDGES.replace("target", "destination"),
        {},
        ["edges.csv: column 'target' (data.target_column) not found", "source, destination"],
    ),
    (
        "missing label column",
        NODES,
        EDGES,
        {"label_column": "parcel_mix"},
        ["nodes.csv: column 'parcel_mix' (data.label_column) not found"],
    ),
    (
        "unknown split value",
        NODES.replace("validation", "holdout"),
        EDGES,
        {"split_column": "split"},
        ["nodes.csv: row 2 (line 3)", "column 'split' holds 'holdout'", "train, validation"],
    ),
]


@pytest.mark.parametrize(
    ("nodes", "edges", "options", "pieces"),
    [case[1:] for case in DEFECTS],
    ids=[case[0] for case in DEFECTS],
)
def test_each_defect_has_a_one_line_error(
    tmp_path: Path, nodes: str, edges: str, options: dict, pieces: list[str]
) -> None:
    message = load_error(write(tmp_path, nodes, edges), **options)
    for piece in pieces:
        assert piece in message, (piece, message)


def test_truncated_parquet_is_named(tmp_path: Path) -> None:
    pd.DataFrame({"id": ["a", "b"], "label": [0, 1], "x0": [1.0, 2.0]}).to_parquet(
        tmp_path / "nodes.parquet"
    )
    whole = (tmp_path / "nodes.parquet").read_bytes()
    (tmp_path / "nodes.parquet").write_bytes(whole[: len(whole) // 2])
    (tmp_path / "edges.csv").write_text("source,target\na,b\n", encoding="utf-8")
    raw = {
        "name": "depots",
        "data": {"source": "tables", "nodes": "nodes.parquet", "edges": "edges.csv"},
        "contenders": {"convolution": {"model": "gcn"}},
    }
    with pytest.raises(InputError, match=r"nodes.parquet: cannot read Parquet file, it is trunc"):
        load_tables(parse_suite(raw, str(tmp_path / "suite.toml")).data)


def test_class_without_training_node_is_named(tmp_path: Path, capsys) -> None:
    nodes = NODES.replace("d3,freight,train", "d3,freight,test")
    write(tmp_path, nodes=nodes)
    suite = tmp_path / "suite.toml"
    suite.write_text(
        'name = "depots"\n[data]\nsource = "tables"\nnodes = "nodes.csv"\nedges = "edges.csv"\n'
        'split_column = "split"\n[split]\nmethod = "column"\n'
        '[contenders.convolution]\nmodel = "gcn"\n',
        encoding="utf-8",
    )
    assert main(["check", str(suite)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1
    assert "nodes.csv: column 'split': class 'freight' has no training node" in err
    assert "Traceback" not in err


def test_cli_exit_two_names_the_file(tmp_path: Path, capsys) -> None:
    write(tmp_path, edges=EDGES + "d1,ghost,1\n")
    suite = tmp_path / "suite.toml"
    suite.write_text(
        'name = "depots"\n[data]\nsource = "tables"\nnodes = "nodes.csv"\nedges = "edges.csv"\n'
        'split_column = "split"\n[contenders.convolution]\nmodel = "gcn"\n',
        encoding="utf-8",
    )
    assert main(["check", str(suite)]) == 2
    err = capsys.readouterr().err
    assert "edges.csv: row 6 (line 7): target 'ghost'" in err and "Traceback" not in err


def test_missing_file_is_a_schema_error(tmp_path: Path) -> None:
    with pytest.raises(InputError, match=r"data.nodes: given 'nodes.csv'; file not found"):
        table_section(tmp_path)


def test_large_tables_load_column_wise(tmp_path: Path) -> None:
    """20,000 nodes and 60,000 edges: only vectorised pandas/numpy work, so this stays quick."""
    rng = np.random.default_rng(0)
    count = 20_000
    ids = np.array([f"n{i}" for i in range(count)])
    pd.DataFrame({"id": ids, "label": rng.integers(0, 3, count), "f": rng.random(count)}).to_csv(
        tmp_path / "nodes.csv", index=False
    )
    pairs = rng.integers(0, count, size=(60_000, 2))
    pd.DataFrame({"source": ids[pairs[:, 0]], "target": ids[pairs[:, 1]]}).to_csv(
        tmp_path / "edges.csv", index=False
    )
    data = load_tables(table_section(tmp_path))
    assert data.num_nodes == count
    removed = data.self_loops_removed + data.duplicate_edges_removed
    assert removed > 0  # 60,000 random pairs among 20,000 nodes repeat some pairs
    assert data.edge_index.size(1) // 2 + removed == 60_000


def test_standardised_features_have_mean_zero_and_unit_spread(tmp_path: Path) -> None:
    write(tmp_path)
    data = load_tables(table_section(tmp_path, split_column="split", standardise=True))
    assert data.x.mean(0).abs().max() < 1e-6
    assert (data.x.std(0, unbiased=False) - 1).abs().max() < 1e-5

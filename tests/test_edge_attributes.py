"""Edge attributes: a fictional freight exchange's depots (nodes) and shipments (edges), each
shipment carrying a transport mode and a weight; typed synthetic edges; attention and GINE over
edge attributes, full-batch, sampled and chunked; the suite checks that refuse misuse."""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest
import torch
from torch_geometric.utils import add_self_loops

from harness.analysis.edge_type_attention import edge_type_attention
from harness.data.edge_attributes import edge_types
from harness.data.profile import profile_graph
from harness.data.synthetic import contextual_sbm
from harness.data.tables import load_tables
from harness.errors import InputError
from harness.models import build_model
from harness.planning import expand, parse_suite
from harness.report.documents.profile import profile_rows
from harness.schema.base import key_dump
from harness.schema.contenders import AttentionOptions, EdgeConvolutionOptions
from harness.schema.data import SyntheticData
from harness.training.inference import chunked_logits
from harness.training.runs import perform

NODES = """\
id,label,f_size
a,north,1.0
b,north,2.0
c,south,0.5
d,south,0.2
"""
EDGES = """\
source,target,mode,tonnes
a,b,rail,10
b,c,road,2
c,d,sea,40
d,a,road,1
"""


def write(folder: Path, edges: str = EDGES) -> Path:
    (folder / "nodes.csv").write_text(NODES, encoding="utf-8")
    (folder / "edges.csv").write_text(edges, encoding="utf-8")
    return folder


def suite_raw(data: dict, contenders: dict | None = None, **rest: object) -> dict:
    return {
        "name": "freight",
        "data": data,
        "contenders": contenders or {"attention": {"model": "gat", "edge_features": True}},
        **rest,
    }


def tables(folder: Path, **options: object) -> dict:
    return {"source": "tables", "nodes": "nodes.csv", "edges": "edges.csv", **options}


def test_table_attributes_reach_both_directions(tmp_path: Path) -> None:
    section = parse_suite(
        suite_raw(tables(tmp_path, edge_feature_columns=["mode", "tonnes"])),
        str(write(tmp_path) / "suite.toml"),
    ).data
    data = load_tables(section)
    assert data.edge_attribute_names == ["mode=rail", "mode=road", "mode=sea", "tonnes"]
    assert data.edge_type_names == ["rail", "road", "sea"]
    pairs = {
        tuple(e): a.tolist()
        for e, a in zip(data.edge_index.t().tolist(), data.edge_attr, strict=True)
    }
    assert pairs[(0, 1)] == pairs[(1, 0)] == [1.0, 0.0, 0.0, 10.0]  # a-b by rail, 10 tonnes
    assert pairs[(2, 3)] == pairs[(3, 2)] == [0.0, 0.0, 1.0, 40.0]
    types = edge_types(data, torch.tensor([[0, 1, 2, 0], [1, 0, 3, 0]]))
    assert types.tolist() == [0, 0, 2, -1]  # the self-loop is no edge of the graph


def test_prefix_takes_matching_columns(tmp_path: Path) -> None:
    edges = EDGES.replace("mode,tonnes", "e_mode,e_tonnes")
    section = parse_suite(
        suite_raw(tables(tmp_path, edge_feature_prefix="e_")), str(write(tmp_path, edges) / "s")
    ).data
    assert load_tables(section).edge_attribute_names[-1] == "e_tonnes"


@pytest.mark.parametrize(
    ("edges", "expected"),
    [
        (EDGES.replace("c,d,sea,40", "c,d,,40"), "edges.csv: row 3 (line 4): empty edge attribute"),
        (
            EDGES.replace("b,c,road,2", "b,c,road,heavy"),
            "column 'tonnes' is not numeric (row 2 holds 'heavy')",
        ),
    ],
)
def test_bad_cells_are_row_errors(tmp_path: Path, edges: str, expected: str) -> None:
    section = parse_suite(
        suite_raw(tables(tmp_path, edge_feature_columns=["mode", "tonnes"])),
        str(write(tmp_path, edges) / "suite.toml"),
    ).data
    with pytest.raises(InputError, match=expected.replace("(", r"\(").replace(")", r"\)")):
        load_tables(section)


def test_missing_column_names_the_option(tmp_path: Path) -> None:
    section = parse_suite(
        suite_raw(tables(tmp_path, edge_feature_columns=["speed"])), str(write(tmp_path) / "s")
    ).data
    with pytest.raises(InputError, match=r"column 'speed' \(data.edge_feature_columns\)"):
        load_tables(section)


def test_typed_synthetic_edges_carry_the_signal_on_type_zero() -> None:
    spec = SyntheticData(source="synthetic", nodes=600, classes=3, edge_types=3, edge_homophily=0.9)
    data = contextual_sbm(spec)
    kinds = edge_types(data, data.edge_index)
    assert data.edge_attr.shape == (data.edge_index.size(1), 3)
    same = data.y[data.edge_index[0]] == data.y[data.edge_index[1]]
    assert float(same[kinds == 0].float().mean()) > 0.8
    assert float(same[kinds == 1].float().mean()) < 0.5  # random targets: about 1/3
    untyped = contextual_sbm(SyntheticData(source="synthetic", nodes=600, classes=3))
    assert getattr(untyped, "edge_attr", None) is None
    same = untyped.y[untyped.edge_index[0]] == untyped.y[untyped.edge_index[1]]
    assert float(same.float().mean()) > 0.6  # edge_homophily 0.7


def test_self_loops_get_the_mean_of_incoming_attributes() -> None:
    """PyG's add_self_loops(fill_value="mean") is the reference for the loop attributes."""
    network = build_model(
        AttentionOptions(model="gat", layers=1, heads=1, edge_features=True), 2, 2, edge_width=2
    )
    edges = torch.tensor([[0, 1, 2], [2, 2, 0]])
    attributes = torch.tensor([[1.0, 0.0], [0.0, 4.0], [3.0, 3.0]])
    built, looped = network.attributed_edges(edges, 3, attributes)
    expected_edges, expected = add_self_loops(edges, attributes, fill_value="mean", num_nodes=3)
    assert torch.equal(built, expected_edges) and torch.equal(looped, expected)
    assert looped[-1].tolist() == [0.5, 2.0]  # node 2 receives (1, 0) and (0, 4)


@pytest.mark.parametrize(
    "options",
    [
        AttentionOptions(model="gat", edge_features=True, heads=2, hidden=3),
        AttentionOptions(model="dot_product", edge_features=True, heads=2, hidden=3),
        EdgeConvolutionOptions(model="gine", hidden=5),
    ],
)
def test_chunked_logits_match_a_full_pass_with_attributes(options: object) -> None:
    torch.manual_seed(0)
    x = torch.randn(12, 4)
    edges = torch.randint(0, 12, (2, 40))
    attributes = torch.randn(40, 3)
    network = build_model(options, 4, 3, edge_width=3).eval()
    with torch.no_grad():
        whole = network(x, edges, edge_attr=attributes)
        without = network(x, edges, edge_attr=torch.zeros(40, 3))
    chunked = chunked_logits(network, x, edges, chunk_nodes=5, edge_attr=attributes)
    assert torch.allclose(whole, chunked, atol=1e-5)
    assert not torch.allclose(whole, without, atol=1e-3)  # the attributes change the output


def test_edge_features_need_data_that_has_them(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="data source 'karate' gives no edge attributes"):
        parse_suite(suite_raw({"source": "karate"}), str(tmp_path / "suite.toml"))
    plain = {"source": "synthetic", "nodes": 50}
    with pytest.raises(InputError, match="edge_types >= 2"):
        parse_suite(suite_raw(plain), str(tmp_path / "suite.toml"))


def test_edge_features_refuse_wider_hops() -> None:
    with pytest.raises(ValueError, match="edges beyond one hop have no attributes"):
        AttentionOptions(model="gat", edge_features=True, hop_radius=2)


def test_edge_features_stay_out_of_run_keys_unless_set() -> None:
    plain = key_dump(AttentionOptions(model="gat"))
    assert "edge_features" not in plain
    assert key_dump(AttentionOptions(model="gat", edge_features=True))["edge_features"] is True


def test_profile_lists_attributes_and_homophily_per_edge_type() -> None:
    spec = SyntheticData(source="synthetic", nodes=600, classes=3, edge_types=2, edge_homophily=0.9)
    profile = profile_graph(contextual_sbm(spec))
    assert profile.edge_attributes == ["edge_type=0", "edge_type=1"]
    informative, random = profile.edge_type_homophily["0"], profile.edge_type_homophily["1"]
    assert informative[1] > 0.8 > 0.5 > random[1]  # random targets: about 1/3 of the same class
    assert informative[0] + random[0] == profile.edges * 2  # undirected: both directions
    rows = dict(profile_rows(profile))
    assert rows["edge type 0"].endswith(f"edge homophily {informative[1]:.3f}")
    assert profile_graph(contextual_sbm(SyntheticData(source="synthetic"))).edge_attributes == []


def test_stored_edge_type_shares_become_a_report_table() -> None:
    def run(seed_share: float) -> dict:
        heads = [{"layer": 1, "head": 1, "attention_share": [seed_share, 1 - seed_share]}]
        heads[0]["edge_share"] = [0.25, 0.75]
        return {"attention": {"edge_types": {"names": ["rail", "road"], "heads": heads}}}

    runs = pd.DataFrame(
        {
            "suite": ["s", "s", "s"],
            "contender": ["attention", "attention", "mlp"],
            "point": [{}, {}, {}],
            "extras": [run(0.6), run(0.8), {}],
        }
    )
    frame = edge_type_attention(runs)
    rail = frame[frame["edge_type"] == "rail"].iloc[0]
    assert rail["attention_share"] == pytest.approx(0.7)  # mean over the two seeds
    assert rail["ratio"] == pytest.approx(0.7 / 0.25)
    assert len(frame) == 2


@pytest.mark.parametrize(
    ("model", "training", "setting"),
    [
        (
            {"model": "gat", "edge_features": True, "heads": 2},
            {"batching": "sampled", "fanout": "all"},
            None,
        ),
        ({"model": "gine"}, {"batching": "sampled", "fanout": [3, 3]}, None),
        ({"model": "transformer", "edge_features": True, "heads": 2}, {}, "inductive"),
    ],
)
def test_runs_over_typed_edges_train_sampled_and_inductive(
    tmp_path: Path, model: dict, training: dict, setting: str | None
) -> None:
    """Edge attributes travel with sampled batches (drawn edges keep their rows) and into the
    training subgraph of inductive runs; the attention runs store the edge-type diagnostic."""
    data = {"source": "synthetic", "nodes": 120, "classes": 3, "edge_types": 3}
    raw = suite_raw(data, {"contender": model}, training={"epochs": 3, **training})
    if setting:
        raw["setting"] = setting
    spec = expand(parse_suite(raw, str(tmp_path / "suite.toml")))[0]
    result = perform(spec)
    assert 0.0 <= result.test_metric <= 1.0
    if "heads" in model:
        shares = result.extras["attention"]["edge_types"]["heads"]
        assert len(shares) == 2 * 2  # two layers, two heads
        assert all(sum(record["edge_share"]) == pytest.approx(1.0) for record in shares)


def test_link_prediction_refuses_contenders_that_read_edge_attributes(tmp_path: Path) -> None:
    data = {"source": "synthetic", "nodes": 60, "edge_types": 2}
    raw = suite_raw(data, {"convolution": {"model": "gine"}}, task="link_prediction")
    with pytest.raises(InputError, match="link prediction does not pass to models yet"):
        parse_suite(raw, str(tmp_path / "suite.toml"))

"""Link prediction suites end to end: schema, edge splits, run, store, baseline and gate,
tuning with pruning and ablation grids, and the one-line errors of bad input."""

from __future__ import annotations

import json
import random
from pathlib import Path

import pytest
import torch

from harness.cli import main
from harness.data import load_graph
from harness.data.edge_splits import edge_split
from harness.errors import InputError
from harness.planning import expand, load_suite, parse_suite
from harness.storage import store
from harness.training.runs import perform

# fictional Fernhill Bicycle Co-operative: docking stations and regular trips between them
LINK_SUITE = """\
name = "tiny_stations"
seeds = 2
task = "link_prediction"
metric = "average_precision"

[data]
source = "synthetic"
nodes = 100
classes = 3
average_degree = 6
edge_homophily = 0.85
feature_dimension = 6
feature_signal = 1.0
graph_seed = 2

[split]
train = 0.8
validation = 0.1
test = 0.1

[link]
decoder = "mlp"
hits_k = 10

[training]
epochs = 12
patience = 12
learning_rate = 0.02

[contenders.attention]
model = "gatv2"
heads = 2
hidden = 4

[contenders.features_only]
model = "mlp"
hidden = 8
"""


def raw_suite(**changes: object) -> dict:
    raw = {
        "name": "stations",
        "task": "link_prediction",
        "data": {"source": "synthetic", "nodes": 60, "graph_seed": 1},
        "split": {"train": 0.8, "validation": 0.1, "test": 0.1},
        "contenders": {"attention": {"model": "gat"}},
    }
    raw.update(changes)
    return {key: value for key, value in raw.items() if value is not None}


def test_a_link_suite_defaults_to_roc_auc_and_a_node_suite_keeps_accuracy():
    assert parse_suite(raw_suite(), "s.toml").metric == "roc_auc"
    assert parse_suite(raw_suite(task=None, split=None), "s.toml").metric == "accuracy"


@pytest.mark.parametrize(
    ("changes", "expected"),
    [
        (
            {"metric": "macro_f1"},
            "s.toml: metric: given 'macro_f1'; allowed for task 'link_prediction'",
        ),
        (
            {"task": None, "metric": "hits_at_k"},
            "s.toml: metric: given 'hits_at_k'; allowed for task 'node_",
        ),
        ({"task": None, "link": {"hits_k": 5}}, "s.toml: link: [link] is for task"),
        ({"homophily_map": {}}, "s.toml: homophily_map: not available for link prediction"),
        ({"split": {"method": "per_class"}}, "s.toml: split: method 'per_class' is for node"),
        ({"split": {"train": 0.5, "validation": 0.1, "test": 0.1}}, "s.toml: split: train +"),
        ({"link": {"decoder": "cosine"}}, "s.toml: link.decoder: given 'cosine'"),
        (
            {"training": {"batching": "sampled", "fanout": "all"}},
            's.toml: training.batching: given "sampled"; sampled batches are not extended',
        ),
    ],
)
def test_bad_link_suites_are_one_line_errors_naming_the_key(changes, expected):
    with pytest.raises(InputError) as error:
        parse_suite(raw_suite(**changes), "s.toml")
    assert str(error.value).startswith(expected), str(error.value)
    assert "\n" not in str(error.value)


def test_the_edge_split_depends_on_the_seed_alone_and_leaves_other_generators_alone():
    suite = parse_suite(raw_suite(), "s.toml")
    data = load_graph(suite.data)
    torch.manual_seed(5)
    random.seed(5)
    before = (torch.rand(1), random.random())
    torch.manual_seed(5)
    random.seed(5)
    first = edge_split(data, suite.split, suite.task_options, seed=3)
    again = edge_split(data, suite.split, suite.task_options, seed=3)
    assert (torch.rand(1), random.random()) == before
    other = edge_split(data, suite.split, suite.task_options, seed=4)
    for name in ("train_graph", "validation_pairs", "test_pairs", "test_labels"):
        assert torch.equal(getattr(first, name), getattr(again, name))
    assert not torch.equal(first.test_pairs, other.test_pairs)
    # negatives are non-edges of the whole graph, one per held-out edge
    edges = {tuple(edge) for edge in data.edge_index.t().tolist()}
    negatives = first.test_pairs[:, first.test_labels == 0].t().tolist()
    assert len(negatives) == int(first.test_labels.sum())
    assert not any(tuple(pair) in edges for pair in negatives)


def test_a_link_run_is_repeatable_from_its_spec():
    spec = expand(parse_suite(raw_suite(training={"epochs": 4}), "s.toml"))[0]
    first = perform(spec)
    random.seed(99)  # whatever ran before
    torch.manual_seed(99)
    second = perform(spec)
    assert first.test_scores == second.test_scores and first.curve == second.curve


def test_too_few_edges_and_too_many_negatives_are_one_line_errors(write_suite, capsys):
    few = write_suite(LINK_SUITE.replace("nodes = 100", "nodes = 8").replace("= 6\n", "= 1\n", 1))
    assert main(["check", str(few)]) == 2
    message = capsys.readouterr().err.strip()
    assert "split.validation:" in message and "holds no edge" in message
    assert len(message.splitlines()) == 1
    dense = LINK_SUITE.replace("nodes = 100", "nodes = 10").replace("= 6\n", "= 8\n", 1)
    dense = dense.replace("hits_k = 10", "hits_k = 10\nnegatives_per_positive = 40")
    assert main(["check", str(write_suite(dense, "dense.toml"))]) == 2
    message = capsys.readouterr().err.strip()
    assert "link.negatives_per_positive:" in message and len(message.splitlines()) == 1


def test_node_suite_keys_ignore_the_task_option_and_link_keys_differ():
    node = parse_suite(raw_suite(task=None, split=None), "s.toml")
    explicit = parse_suite(raw_suite(task="node_classification", split=None), "s.toml")
    assert [s.key for s in expand(node)] == [s.key for s in expand(explicit)]
    links = parse_suite(raw_suite(metric="accuracy", task=None, split=None), "s.toml")
    assert [s.key for s in expand(links)] == [s.key for s in expand(node)]
    link = parse_suite(raw_suite(split=None), "s.toml")
    assert not {s.key for s in expand(link)} & {s.key for s in expand(node)}


def test_a_link_suite_runs_stores_every_metric_and_passes_its_own_gate(
    write_suite, tmp_path, capsys
):
    suite = write_suite(LINK_SUITE, "stations.toml")
    runs_db, baseline = tmp_path / "runs.db", tmp_path / "stations.json"
    assert main(["run", str(suite), "--store", str(runs_db), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "test average precision" in out and "Verdict:" in out
    assert "Same label skipped: these runs used no node labels." in " ".join(out.split())
    runs = store.load_runs(runs_db, ["tiny_stations"])
    assert len(runs) == 4 and runs["metric"].eq("average_precision").all()
    assert runs["test_metric"].equals(runs["test_average_precision"])
    for column in ("test_roc_auc", "test_average_precision", "test_hits_at_k"):
        assert runs[column].between(0, 1).all()
    assert runs["test_accuracy"].isna().all() and runs["test_macro_f1"].isna().all()
    attention = runs[runs["contender"] == "attention"]["extras"].iloc[0]["attention"]
    assert attention["mean"]["same_label_share"] is None and "no node labels" in attention["note"]
    assert attention["mean"]["entropy_ratio"] is not None
    arguments = ["--store", str(runs_db)]
    assert main(["baseline", str(suite), "--save", str(baseline), *arguments]) == 0
    document = json.loads(baseline.read_text())
    assert document["task"]["task"] == "link_prediction"
    assert document["task"]["link"]["hits_k"] == 10
    seed_zero = document["contenders"]["attention"]["runs"][0]
    assert {"test_roc_auc", "test_average_precision", "test_hits_at_k"} <= set(seed_zero)
    assert main(["gate", str(suite), "--baseline", str(baseline), *arguments]) == 0
    edited = suite.read_text().replace("hits_k = 10", "hits_k = 20")
    suite.write_text(edited)
    assert main(["gate", str(suite), "--baseline", str(baseline), *arguments]) == 2
    assert "link.hits_k: baseline 10, suite 20" in capsys.readouterr().err


@pytest.mark.slow  # trains dozens of runs
def test_tuning_with_pruning_and_an_ablation_grid_run_on_link_suites(write_suite, tmp_path):
    tuned = LINK_SUITE + '[tuning]\ntrials = 3\npruner = "median"\nheartbeat_seconds = 1\n'
    path = write_suite(tuned, "tuned.toml")
    url = f"sqlite:///{tmp_path / 'tuning.db'}"
    runs_db = tmp_path / "runs.db"
    arguments = ["--store", str(runs_db), "--tuning-database", url, "--quiet"]
    assert main(["run", str(path), *arguments]) == 0
    runs = store.load_runs(runs_db, ["tiny_stations"])
    assert len(runs) == 4 and runs["test_hits_at_k"].notna().all()
    grid = LINK_SUITE.replace('name = "tiny_stations"', 'name = "grid_stations"')
    grid += '[ablation.attention]\nmode = "grid"\n[ablation.attention.axes]\nheads = [1, 2]\n'
    grid_path = write_suite(grid, "grid.toml")
    assert len(expand(load_suite(grid_path))) == 6
    assert main(["run", str(grid_path), "--store", str(runs_db), "--quiet"]) == 0
    points = store.load_runs(runs_db, ["grid_stations"])["point"]
    assert sorted(point.get("heads", 0) for point in points) == [0, 0, 1, 1, 2, 2]


def test_a_label_column_in_a_link_suite_is_a_warning_not_an_error(write_suite, capsys):
    examples = Path(__file__).resolve().parents[1] / "examples" / "courier"
    text = f"""name = "courier_links"
seeds = 1
task = "link_prediction"
[data]
source = "tables"
nodes = "{examples / "sites.csv"}"
edges = "{examples / "routes.csv"}"
id_column = "site_id"
label_column = "service"
feature_prefix = "site_"
source_column = "from_site"
target_column = "to_site"
[split]
train = 0.8
validation = 0.1
test = 0.1
[contenders.convolution]
model = "gcn"
"""
    assert main(["check", str(write_suite(text, "courier_links.toml"))]) == 0
    warnings = [line for line in capsys.readouterr().out.splitlines() if "warning" in line]
    assert (
        len(warnings) == 1 and "data.label_column: warning: link prediction uses no" in warnings[0]
    )

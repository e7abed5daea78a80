"""Per-node breakdown end to end: runs stored with their test-node predictions, then grouped.

The graph is an invented one: a fictional parcel-sorting network in two districts. In the
first district every route joins two depots of the same parcel mix; in the second every route
joins depots of different mixes. Features carry the mix with noise, so an edge-blind MLP
does equally well in both districts, while graph convolution averages same-mix neighbours in
the first (and gains) and other-mix neighbours in the second (and loses).
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from harness.api import analyse_store
from harness.api import breakdown as node_breakdown
from harness.cli import main
from harness.execution.local import execute
from harness.planning import expand, load_suite
from harness.report.documents.suite import suite_document
from harness.report.documents.wording import breakdown_summary
from harness.report.formats.folder import write_report
from harness.results import NodePredictions
from harness.storage.predictions import decode, encode, levels, load_predictions

CLASSES, PER_DISTRICT, NEIGHBOURS, SIGNAL = 6, 120, 6, 2.0

SUITE = """\
name = "two_districts"
seeds = 5
metric = "accuracy"

[data]
source = "tables"
nodes = "depots.csv"
edges = "routes.csv"
id_column = "depot"
label_column = "mix"
feature_prefix = "f_"
source_column = "from_depot"
target_column = "to_depot"

[split]
train = 0.4
validation = 0.2
test = 0.4

[training]
epochs = 60
patience = 20
learning_rate = 0.02

[contenders.convolution]
model = "gcn"
hidden = 16

[contenders.features_only]
model = "mlp"
hidden = 16

[analysis]
baselines = ["features_only"]
"""


def two_districts(folder: Path) -> Path:
    """Depot and route tables of the two districts (seeded), and the suite file."""
    generator = np.random.default_rng(11)
    nodes = 2 * PER_DISTRICT
    labels = np.arange(nodes) % CLASSES
    features = SIGNAL * np.eye(CLASSES)[labels] + generator.normal(size=(nodes, CLASSES))
    routes = set()
    for depot in range(nodes):
        district = np.arange(PER_DISTRICT) + (depot // PER_DISTRICT) * PER_DISTRICT
        same = labels[district] == labels[depot]
        pool = district[same if depot < PER_DISTRICT else ~same]
        for other in generator.choice(pool[pool != depot], NEIGHBOURS, replace=False):
            routes.add((min(depot, other), max(depot, other)))
    table = pd.DataFrame(features, columns=[f"f_{i}" for i in range(CLASSES)])
    table.insert(0, "mix", labels)
    table.insert(0, "depot", np.arange(nodes))
    table.to_csv(folder / "depots.csv", index=False)
    edges = pd.DataFrame(sorted(routes), columns=["from_depot", "to_depot"])
    edges.to_csv(folder / "routes.csv", index=False)
    path = folder / "suite.toml"
    path.write_text(SUITE, encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def stored(tmp_path_factory: pytest.TempPathFactory) -> tuple[Path, Path]:
    folder = tmp_path_factory.mktemp("districts")
    suite = two_districts(folder)
    store = folder / "runs.db"
    execute(expand(load_suite(suite)), store)
    return suite, store


def test_convolution_gains_where_neighbours_agree_and_loses_where_they_do_not(stored):
    suite, store = stored
    table = node_breakdown(store, suite)
    homophily = table[table["grouping"] == "local_homophily"].set_index("group")
    assert list(homophily.index) == ["0.0-0.2", "0.8-1.0"]  # the only bins with nodes
    high, low = homophily.loc["0.8-1.0"], homophily.loc["0.0-0.2"]
    assert high["difference"] > 0 and high["low"] > 0, high.to_dict()
    assert low["difference"] < 0 and low["high"] < 0, low.to_dict()
    assert (high["verdict"], low["verdict"]) == ("better", "worse")
    assert set(table["attention"]) == {"convolution"} and set(table["baseline"]) == {
        "features_only"
    }
    # Holm over every group: each adjusted p is at least its raw p
    assert (table["p_t_holm"] >= table["p_t"] - 1e-12).all()
    summary = breakdown_summary(analyse_store(store, suite).breakdown)
    assert "gain concentrates in local homophily 0.8-1.0" in summary
    assert "loses in local homophily 0.0-0.2" in summary


def test_group_metrics_reproduce_the_stored_test_metric(stored):
    """The nodes of all groups of one grouping are the test set: recomputing each run's
    accuracy from its stored 8-bit probabilities gives the stored test accuracy exactly."""
    suite, store = stored
    report = analyse_store(store, suite)
    predictions = load_predictions(store, report.runs["key"])
    labels = pd.read_csv(suite.parent / "depots.csv")["mix"].to_numpy()
    for run in report.runs.itertuples():
        stored_run = predictions[run.key]
        correct = stored_run.probabilities.argmax(1) == labels[stored_run.nodes]
        assert correct.mean() == pytest.approx(run.test_accuracy, abs=1e-9)
        assert np.allclose(stored_run.probabilities.sum(1), 1, atol=1e-6)


def test_report_writes_breakdown_csv_and_plot(stored, tmp_path):
    suite, store = stored
    write_report(suite_document(analyse_store(store, suite), drawn=True), tmp_path)
    written = pd.read_csv(tmp_path / "csv" / "breakdown.csv")
    columns = ["grouping", "group", "nodes", "attention", "baseline", "difference", "low", "high"]
    assert list(written.columns[:8]) == columns
    assert list(dict.fromkeys(written["grouping"])) == ["degree", "local_homophily"]
    assert (tmp_path / "plots" / "breakdown.png").stat().st_size > 1000
    markdown = (tmp_path / "report.md").read_text(encoding="utf-8")
    assert "## Per-node breakdown: convolution against features\\_only" in markdown


def test_show_json_leaves_predictions_out_unless_asked(stored, capsys):
    suite, store = stored
    assert main(["show", str(suite), "--store", str(store), "--format", "json"]) == 0
    plain = json.loads(capsys.readouterr().out)
    assert all("predictions" not in record for record in plain)
    command = ["show", str(suite), "--store", str(store), "--format", "json", "--predictions"]
    assert main(command) == 0
    full = json.loads(capsys.readouterr().out)
    first = full[0]["predictions"]
    assert len(first["nodes"]) == len(first["probabilities"]) == 2 * PER_DISTRICT * 0.4
    assert len(first["probabilities"][0]) == CLASSES
    assert main([*command[:-3], "--format", "csv", "--predictions"]) == 2
    assert "--predictions: given with --format csv; allowed: json" in capsys.readouterr().err


def test_encoding_keeps_8_bit_levels_in_ascending_node_order():
    generator = np.random.default_rng(0)
    nodes = np.array([7, 2, 9, 4])
    probabilities = generator.dirichlet(np.ones(3), size=4).astype(np.float32)
    back = decode(encode(NodePredictions(nodes, probabilities, 12)))
    order = np.argsort(nodes)
    assert back.graph_nodes == 12 and back.nodes.tolist() == [2, 4, 7, 9]
    expected = levels(probabilities[order]).astype(np.float32) / 255
    assert np.array_equal(back.probabilities, expected)

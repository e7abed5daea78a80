"""Graph classification suites end to end: run, store, figures against scikit-learn, describe,
check, show, report, baseline and gate, tuning and an ablation grid over readouts."""

from __future__ import annotations

import json

import pytest
from sklearn.metrics import accuracy_score, average_precision_score, f1_score, roc_auc_score

from harness.cli import main
from harness.data import load_graph
from harness.planning import expand, load_suite
from harness.storage import store
from harness.storage.predictions import load_predictions
from harness.training.runs import OBJECTIVES
from tests.graph_files import write_molecules

# fictional Brackenridge Circuits: inspected boards as graphs of components and traces; the
# flaw class is which defect pattern a board holds (a loop, a fan-out, a bridge, a short)
BOARD_SUITE = """\
name = "tiny_boards"
seeds = 2
task = "graph_classification"
metric = "macro_f1"

[data]
source = "synthetic_graphs"
graphs = 80
motifs = ["cycle", "clique"]
tree_nodes_min = 6
tree_nodes_max = 12
feature_signal = 1.0

[split]
train = 0.5
validation = 0.25
test = 0.25

[graphs]
batch_size = 16

[training]
epochs = 15
patience = 15
learning_rate = 0.02

[contenders.attention]
model = "gat"
heads = 2
hidden = 4
readout = "attention"

[contenders.isomorphism]
model = "gin"
hidden = 8
readout = "sum"

[contenders.features_only]
model = "mlp"
hidden = 8
"""


@pytest.fixture
def boards(write_suite):
    return write_suite(BOARD_SUITE, "boards.toml")


@pytest.mark.slow  # trains dozens of runs
def test_a_graph_suite_runs_and_stores_every_metric_of_its_task(boards, tmp_path, capsys):
    """Every stored figure recomputed from the run's stored test-graph probabilities with
    scikit-learn (accuracy_score, f1_score, roc_auc_score, average_precision_score)."""
    runs_db = tmp_path / "runs.db"
    assert main(["run", str(boards), "--store", str(runs_db), "--quiet", "--jobs", "2"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "test macro-F1" in out and "Verdict:" in out and "graph size" in out
    runs = store.load_runs(runs_db, ["tiny_boards"])
    assert len(runs) == 6 and runs["test_metric"].equals(runs["test_macro_f1"])
    assert runs["test_hits_at_k"].isna().all()
    suite = load_suite(boards)
    keys = {spec.key for spec in expand(suite)}
    assert set(runs["key"]) == keys
    stored = load_predictions(runs_db, list(keys))
    labels = load_graph(suite.data).y.numpy()
    for run in runs.itertuples():
        predictions = stored[run.key]
        truth = labels[predictions.nodes]  # the stored rows are the test graphs
        probabilities = predictions.probabilities
        chosen = probabilities.argmax(1)
        assert run.test_accuracy == pytest.approx(accuracy_score(truth, chosen), abs=1e-9)
        assert run.test_macro_f1 == pytest.approx(
            f1_score(truth, chosen, average="macro"), abs=1e-9
        )
        assert run.test_roc_auc == pytest.approx(roc_auc_score(truth, probabilities[:, 1]), 2e-2)
        assert run.test_average_precision == pytest.approx(
            average_precision_score(truth, probabilities[:, 1]), abs=2e-2
        )
    # the planted motifs are told apart well above chance by a model that reads edges
    assert runs[runs["contender"] == "isomorphism"]["test_accuracy"].mean() > 0.7


def test_check_and_describe_speak_of_graphs(boards, capsys):
    assert main(["check", str(boards)]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "80 graphs of" in out and "classes: cycle 40, clique 40" in out
    assert main(["describe", str(boards), "--format", "json"]) == 0
    profile = json.loads(capsys.readouterr().out)
    collection = (
        profile["collection"] if "collection" in profile else profile["profile"]["collection"]
    )
    assert collection["graphs"] == 80 and collection["distinct_scaffolds"] is None
    assert collection["nodes_minimum"] >= 6 + 5


@pytest.mark.slow  # trains dozens of runs
def test_a_graph_suite_reports_and_passes_its_own_gate(boards, tmp_path, capsys):
    runs_db, baseline = tmp_path / "runs.db", tmp_path / "boards.json"
    arguments = ["--store", str(runs_db)]
    assert main(["baseline", str(boards), "--save", str(baseline), *arguments]) == 0
    document = json.loads(baseline.read_text())
    assert document["task"]["task"] == "graph_classification"
    assert document["task"]["graphs"]["batch_size"] == 16
    junit = tmp_path / "gate.xml"
    assert (
        main(["gate", str(boards), "--baseline", str(baseline), "--junit", str(junit), *arguments])
        == 0
    )
    assert "testsuite" in junit.read_text()
    out_folder = tmp_path / "report"
    assert main(["report", str(boards), "--out", str(out_folder), *arguments]) == 0
    written = {path.name for path in out_folder.rglob("*") if path.is_file()}
    assert {"report.md", "report.html"} <= written
    assert main(["show", str(boards), "--format", "csv", *arguments]) == 0
    assert "test_average_precision" in capsys.readouterr().out
    edited = boards.read_text().replace("batch_size = 16", "batch_size = 8")
    boards.write_text(edited)
    assert main(["gate", str(boards), "--baseline", str(baseline), *arguments]) == 2
    assert "graphs.batch_size: baseline 16, suite 8" in capsys.readouterr().err


@pytest.mark.slow  # trains dozens of runs
def test_tuning_and_a_readout_grid_run_on_graph_suites(write_suite, tmp_path):
    tuned = BOARD_SUITE + '[tuning]\ntrials = 3\npruner = "median"\n'
    tuned += "[tuning.space.isomorphism]\nhidden = [4, 16]\n"
    path = write_suite(tuned, "tuned.toml")
    runs_db = tmp_path / "runs.db"
    url = f"sqlite:///{tmp_path / 'tuning.db'}"
    arguments = ["--store", str(runs_db), "--tuning-database", url, "--quiet"]
    assert main(["run", str(path), *arguments]) == 0
    assert len(store.load_runs(runs_db, ["tiny_boards"])) == 6
    grid = BOARD_SUITE.replace('name = "tiny_boards"', 'name = "readouts"')
    grid += '[ablation.isomorphism]\nmode = "grid"\n[ablation.isomorphism.axes]\n'
    grid += 'readout = ["mean", "max", "attention"]\n'
    grid_path = write_suite(grid, "grid.toml")
    assert len(expand(load_suite(grid_path))) == 10
    assert main(["run", str(grid_path), "--store", str(runs_db), "--quiet"]) == 0
    points = store.load_runs(runs_db, ["readouts"])["point"]
    assert sorted(point.get("readout", "") for point in points) == sorted(
        ["", "", "", ""] + ["mean", "mean", "max", "max", "attention", "attention"]
    )


def test_graph_run_keys_follow_the_graphs_table_and_an_explicit_default_readout(boards):
    keys = {spec.key for spec in expand(load_suite(boards))}
    smaller = boards.read_text().replace("batch_size = 16", "batch_size = 8")
    boards.write_text(smaller)
    assert keys.isdisjoint(spec.key for spec in expand(load_suite(boards)))
    # readout "mean" is the default: written out, it keeps the key of the run without it
    plain = smaller.replace('hidden = 8\nreadout = "sum"', "hidden = 8")
    boards.write_text(plain)
    before = {spec.key for spec in expand(load_suite(boards))}
    boards.write_text(plain.replace('model = "mlp"', 'model = "mlp"\nreadout = "mean"'))
    assert {spec.key for spec in expand(load_suite(boards))} == before


MOLECULE_SUITE = """\
name = "tiny_dyes"
seeds = 1
task = "graph_classification"

[data]
source = "molecules"
file = "dyes.csv"

[split]
train = 0.5
validation = 0.25
test = 0.25

[training]
epochs = 3

[contenders.attention_bonds]
model = "gat"
heads = 2
hidden = 4
edge_features = true

[contenders.edge_convolution]
model = "gine"
hidden = 8
"""


def test_molecule_bonds_reach_the_models_that_read_edge_attributes(
    write_suite, tmp_path, monkeypatch
):
    """The bond attributes (one-hot bond type, stereo, conjugation) go to GAT's `edge_dim` and
    GINE's edge term; both runs finish and store their figures."""
    monkeypatch.setenv("HEEDFUL_CACHE", str(tmp_path / "cache"))
    write_molecules(tmp_path)
    suite = write_suite(MOLECULE_SUITE, "dyes.toml")
    spec = expand(load_suite(suite))[0]
    prepared = OBJECTIVES["graph_loss"](spec, load_graph(spec.data), False)
    bonds = load_graph(spec.data).storage.edge_attr.size(1)
    assert prepared.model.encoder.edge_width == bonds > 0
    step = next(iter(prepared.feed.steps()))
    assert step.edge_attr is not None and step.edge_attr.size(1) == bonds
    runs_db = tmp_path / "runs.db"
    assert main(["run", str(suite), "--store", str(runs_db), "--quiet"]) == 0
    assert len(store.load_runs(runs_db, ["tiny_dyes"])) == 2

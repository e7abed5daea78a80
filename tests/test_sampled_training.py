"""Sampled batching end to end: every contender kind trains on sampled batches, seeded runs
repeat exactly with one or two jobs, and the run records its sampler and batch sizes."""

from __future__ import annotations

import json

import pytest

from harness.cli import main
from harness.planning import expand, load_suite, parse_suite, read_suite_file
from harness.storage import store

SAMPLED_SUITE = """\
name = "sampled_depots"
description = "Fictional parcel depots, trained on neighbour-sampled batches"
seeds = 1
metric = "accuracy"
setting = "{setting}"

[data]
source = "synthetic"
nodes = 160
classes = 3
average_degree = 6
edge_homophily = 0.8
feature_dimension = 8
feature_signal = 1.5
graph_seed = 4

[training]
epochs = 3
patience = 3
batching = "sampled"
batch_size = 32
fanout = [4, 3]

[contenders.attention]
model = "gat"
heads = 2
hidden = 4

[contenders.two_hops]
model = "gatv2"
heads = 2
hidden = 4
hop_radius = 2
training = {{ fanout = "all", batch_size = 64 }}

[contenders.convolution]
model = "gcn"
hidden = 8
feature_start = "{start}"

[contenders.neighbour_mean]
model = "sage"
hidden = 8
layers = 3
training = {{ fanout = [3, 3, 2] }}

[contenders.features_only]
model = "mlp"
hidden = 8
"""


def suite_text(setting: str = "transductive", start: str = "random") -> str:
    return SAMPLED_SUITE.format(setting=setting, start=start)


def stored(store_path) -> dict:
    runs = store.load_runs(store_path, ["sampled_depots"])
    return {
        (row.contender, row.seed): (row.val_metric, row.test_metric, list(row.curve))
        for row in runs.itertuples()
    }


def test_sampled_runs_repeat_exactly_with_one_or_two_jobs(write_suite, tmp_path):
    path = write_suite(suite_text())
    one, two = tmp_path / "one.db", tmp_path / "two.db"
    assert main(["run", str(path), "--store", str(one), "--quiet"]) == 0
    assert main(["run", str(path), "--store", str(two), "--quiet", "--jobs", "2"]) == 0
    first, second = stored(one), stored(two)
    assert len(first) == 5 and first == second
    runs = store.load_runs(one, ["sampled_depots"])
    for row in runs.itertuples():
        extras = row.extras if isinstance(row.extras, dict) else json.loads(row.extras)
        batching = extras["batching"]
        assert batching["sampler"] == "heedful_uniform"
        assert batching["sampled_nodes_per_step"] >= 1
        if row.contender == "features_only":
            assert batching["sampled_edges_per_step"] == 0
        else:
            assert batching["sampled_edges_per_step"] > 0
        if row.model in ("gat", "gatv2"):  # diagnostics computed in chunks
            assert extras["attention"]["heads"]


def test_inductive_sampled_runs_keep_the_arrival_check(write_suite, tmp_path):
    path = write_suite(suite_text("inductive", "degree"))
    db = tmp_path / "runs.db"
    assert main(["run", str(path), "--store", str(db), "--quiet"]) == 0
    runs = store.load_runs(db, ["sampled_depots"])
    for row in runs.itertuples():
        extras = row.extras if isinstance(row.extras, dict) else json.loads(row.extras)
        assert extras["arrival"]["max_difference"] < 1e-4


def test_sampled_batching_enters_the_key_with_its_sampler_and_full_batch_keeps_its_key(
    write_suite,
):
    sampled = {s.contender: s for s in expand(load_suite(write_suite(suite_text())))}
    # full batches draw no neighbours: their fan-outs would be refused as unused
    no_fanout = suite_text().replace('fanout = "all", ', "")
    no_fanout = no_fanout.replace("training = { fanout = [3, 3, 2] }\n", "")
    full_text = no_fanout.replace('batching = "sampled"', 'batching = "full"')
    full_text = full_text.replace("fanout = [4, 3]\n", "")
    full = {s.contender: s for s in expand(load_suite(write_suite(full_text, "full.toml")))}
    plain = no_fanout.replace('batching = "sampled"\n', "").replace("fanout = [4, 3]\n", "")
    plain = plain.replace("batch_size = 32\n", "")
    default = {s.contender: s for s in expand(load_suite(write_suite(plain, "plain.toml")))}
    assert full["attention"].key == default["attention"].key  # "full" is the default
    assert sampled["attention"].key != full["attention"].key


@pytest.mark.parametrize(
    ("change", "message"),
    [
        (("fanout = [4, 3]\n", ""), 'training.fanout: required when batching = "sampled"'),
        (("fanout = [4, 3]", "fanout = [4]"), "training.fanout: given [4] (1 entries) for"),
        (("fanout = [4, 3]", "fanout = [4, 0]"), "training.fanout"),
        (("fanout = [4, 3]", 'fanout = "some"'), "training.fanout"),
        (("batch_size = 32", "batch_size = 0"), "training.batch_size"),
        (('batching = "sampled"', 'batching = "minibatch"'), "training.batching"),
        (("fanout = [3, 3, 2]", "fanout = [3, 3]"), "contenders.neighbour_mean.training.fanout"),
    ],
)
def test_bad_batching_is_one_line_naming_the_key(write_suite, capsys, change, message):
    text = suite_text().replace(*change)
    assert main(["check", str(write_suite(text))]) == 2
    error = capsys.readouterr().err.strip()
    assert message in error and "\n" not in error


def test_a_tuned_layer_count_needs_fanout_all(write_suite):
    text = suite_text() + "\n[tuning]\ntrials = 2\n[tuning.space.attention]\nlayers = [1, 2]\n"
    path = write_suite(text)
    with pytest.raises(Exception, match="varies layers"):
        parse_suite(read_suite_file(path), str(path))


def test_a_tuned_suite_trains_its_trials_on_sampled_batches(write_suite, tmp_path):
    text = suite_text().split("[contenders.attention]")[0] + (
        '[contenders.attention]\nmodel = "gat"\nheads = 2\nhidden = 4\n'
        '[contenders.convolution]\nmodel = "gcn"\nhidden = 8\n'
        '[tuning]\ntrials = 3\npruner = "median"\n'
        "[tuning.space.attention]\nlearning_rate = { low = 0.001, high = 0.05, log = true }\n"
    )
    db = tmp_path / "runs.db"
    assert main(["run", str(write_suite(text)), "--store", str(db), "--quiet"]) == 0
    runs = store.load_runs(db, ["sampled_depots"])
    assert set(runs["contender"]) == {"attention", "convolution"}
    for row in runs.itertuples():
        extras = row.extras if isinstance(row.extras, dict) else json.loads(row.extras)
        assert extras["batching"]["sampler"] == "heedful_uniform"

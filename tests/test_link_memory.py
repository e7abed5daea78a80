"""The memory estimate of link runs counts their scored pairs (issue 27, item 5): 20,000 nodes
with 1,000 negatives per edge were estimated at 0.5 GiB and passed 14 GB in 44 s."""

from __future__ import annotations

import pytest

from harness.cli import main
from harness.execution.memory import GIB, check_suite_memory, scored_pair_bytes
from harness.planning import load_suite
from harness.storage import store

LINKS = """\
name = "parcel_links"
seeds = 1
task = "link_prediction"
[data]
source = "synthetic"
nodes = {nodes}
classes = 4
average_degree = 8
graph_seed = 5
[split]
train = 0.8
validation = 0.1
test = 0.1
[link]
negatives_per_positive = {negatives}
[contenders.convolution]
model = "gcn"
hidden = 16
[training]
epochs = 2
"""


def test_the_estimate_grows_with_the_negatives(write_suite):
    few = load_suite(write_suite(LINKS.format(nodes=20000, negatives=1), "few.toml"))
    many = load_suite(write_suite(LINKS.format(nodes=20000, negatives=1000), "many.toml"))
    size = few.data.declared_size()
    pairs_few, pairs_many = scored_pair_bytes(few, size)[0], scored_pair_bytes(many, size)[0]
    assert pairs_many / pairs_few == pytest.approx(1001 / 2)  # (1 + r) pairs per edge
    (estimate,) = check_suite_memory(many, "many.toml", 1, 1000.0)
    assert estimate.bytes > 14 * GIB  # what the issue saw it pass, still growing


def test_the_run_that_passed_14_gb_is_refused_before_drawing_a_negative(write_suite, capsys):
    suite = write_suite(LINKS.format(nodes=20000, negatives=1000))
    assert main(["check", str(suite), "--memory-limit", "14"]) == 2
    error = capsys.readouterr().err.strip()
    assert "allowed: a smaller link.negatives_per_positive (given 1000, whose scored pairs" in error
    assert "sampled" not in error  # link runs train on full batches only
    assert len(error.splitlines()) == 1


def test_the_estimate_covers_the_measured_training_step(write_suite, tmp_path):
    """The run's own measurement (peak_mb: the tensors autograd keeps in a training step,
    harness.training.resources) is what the pair estimate must cover, within a factor of 2.5
    (the estimate adds backward's share and the sampler's indices)."""
    path = write_suite(LINKS.format(nodes=600, negatives=50))
    (estimate,) = check_suite_memory(load_suite(path), str(path), 1, None)
    db = tmp_path / "runs.db"
    assert main(["run", str(path), "--store", str(db), "--quiet"]) == 0
    measured = float(store.load_runs(db, ["parcel_links"])["peak_mb"].iloc[0]) * 2**20
    assert measured <= estimate.task_bytes <= 2.5 * measured

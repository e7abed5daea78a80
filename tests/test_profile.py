"""Dataset profile: figures on a small hand-built graph, the `describe` command, and storage."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
import torch
from torch_geometric.data import Data
from torch_geometric.utils import to_undirected

from harness.cli import main
from harness.data import load_graph
from harness.data.profile import profile_graph
from harness.planning import load_suite
from harness.storage.profiles import load_profiles

KARATE_SUITE = """\
name = "clubhouse"
seeds = 1
[data]
source = "karate"
[split]
method = "per_class"
train_per_class = 2
validation_per_class = 2
[training]
epochs = 2
patience = 2
[contenders.features_only]
model = "mlp"
hidden = 4
"""


def test_profile_of_a_hand_built_graph() -> None:
    """A path 0-1-2-3, node 4 isolated; classes 0,0,1,1 and node 4 unlabelled."""
    edges = to_undirected(torch.tensor([[0, 1, 2], [1, 2, 3]]))
    x = torch.tensor([[0.0, 1.0], [0.0, 2.0], [0.0, 3.0], [0.0, 4.0], [0.0, 5.0]])
    data = Data(x=x, edge_index=edges, y=torch.tensor([0, 0, 1, 1, -1]), num_nodes=5)
    profile = profile_graph(data)
    assert (profile.nodes, profile.edges, profile.directed) == (5, 3, False)
    assert profile.isolated_nodes == 1
    assert (profile.degrees.minimum, profile.degrees.maximum) == (0, 2)
    assert profile.degrees.mean == pytest.approx(6 / 5)
    assert profile.class_counts == [2, 2] and profile.unlabelled_nodes == 1
    assert profile.features.dimension == 2 and profile.features.constant_columns == 1
    assert profile.features.zero_share == pytest.approx(0.5)
    assert profile.homophily.edge == pytest.approx(2 / 3)  # 0-1 and 2-3 of the three edges


def test_describe_command_prints_every_part(write_suite, capsys) -> None:
    suite = write_suite(KARATE_SUITE)
    assert main(["describe", str(suite)]) == 0
    out = capsys.readouterr().out
    for part in ("nodes", "34", "78 (undirected)", "isolated", "Mr. Hi 17 (50%)", "adjusted"):
        assert part in out
    assert main(["describe", str(suite), "--format", "json"]) == 0
    values = json.loads(capsys.readouterr().out)
    assert values["edges"] == 78 and values["class_counts"] == [17, 17]
    assert values["homophily"]["edge"] == pytest.approx(0.859, abs=1e-3)


def test_every_run_stores_the_profile(write_suite, store_path: Path) -> None:
    suite = write_suite(KARATE_SUITE)
    for _ in range(2):
        assert main(["run", str(suite), "--store", str(store_path), "--quiet"]) == 0
    stored = load_profiles(store_path, "clubhouse")
    assert len(stored) == 1  # the same data keeps one row, refreshed on each run
    assert stored[0] == profile_graph(load_graph(load_suite(suite).data))

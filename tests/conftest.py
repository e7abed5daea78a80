"""Shared fixtures: suite files written into a temporary folder, and a tiny fast suite.

Tests run torch on one thread, as the command does by default: their graphs are tiny, so a
second thread buys nothing and only competes with the other test processes for the cores.

The tiny suite is set in an invented scenario: a fictional courier network whose depots are
nodes, shared routes are edges, and each depot is tagged with the parcel mix it mostly handles.
"""

from __future__ import annotations

import textwrap
from collections.abc import Callable
from pathlib import Path

import pytest
import torch

torch.set_num_threads(1)

TINY_SUITE = """\
name = "tiny_couriers"
description = "Fictional courier depots: does attention help to tell their parcel mix?"
seeds = 2
metric = "accuracy"

[data]
source = "synthetic"
nodes = 120
classes = 3
average_degree = 6
edge_homophily = 0.8
feature_dimension = 8
feature_signal = 1.5
graph_seed = 3

[split]
train = 0.4
validation = 0.3
test = 0.3

[training]
epochs = 15
patience = 15
learning_rate = 0.02
weight_decay = 5e-4

[contenders.attention]
model = "gat"
heads = 2
hidden = 4

[contenders.convolution]
model = "gcn"
hidden = 8

[contenders.features_only]
model = "mlp"
hidden = 8
"""


@pytest.fixture(scope="session")
def tiny_suite_text() -> str:
    """TOML of a valid suite: 3 contenders x 2 seeds on 120 nodes, 15 epochs per run."""
    return TINY_SUITE


@pytest.fixture
def write_suite(tmp_path: Path) -> Callable[..., Path]:
    """write_suite(text, name="suite.toml") writes a suite file into tmp_path, returns its path."""

    def write(text: str, name: str = "suite.toml") -> Path:
        path = tmp_path / name
        path.write_text(textwrap.dedent(text), encoding="utf-8")
        return path

    return write


@pytest.fixture
def tiny_suite(write_suite: Callable[..., Path]) -> Path:
    """The tiny suite written to tmp_path/tiny.toml."""
    return write_suite(TINY_SUITE, "tiny.toml")


@pytest.fixture
def store_path(tmp_path: Path) -> Path:
    """A result store path in tmp_path (the file does not exist yet)."""
    return tmp_path / "store" / "runs.db"


@pytest.fixture(scope="session")
def finished_store(tmp_path_factory: pytest.TempPathFactory) -> tuple[Path, Path]:
    """(suite path, store path) after `heedful run` of the tiny suite; copy before changing it."""
    from harness.cli import main

    folder = tmp_path_factory.mktemp("finished")
    suite = folder / "tiny.toml"
    suite.write_text(TINY_SUITE, encoding="utf-8")
    store = folder / "runs.db"
    assert main(["run", str(suite), "--store", str(store), "--quiet"]) == 0
    return suite, store

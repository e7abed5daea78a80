"""Baselines and gates of an ablation suite: each point is kept apart and compared with itself."""

from __future__ import annotations

import json
import xml.etree.ElementTree as ElementTree
from pathlib import Path

import pytest

from harness.cli import main

# A fictional parcel-locker network: lockers are nodes, shared courier rounds are edges.
SUITE = """
name = "locker_points"
seeds = [0, 1]
metric = "accuracy"

[data]
source = "synthetic"
nodes = 120
classes = 3
average_degree = 6
edge_homophily = 0.8
feature_dimension = 8
feature_signal = 1.5
graph_seed = 5

[training]
epochs = 8
patience = 8

[contenders.plain]
model = "mlp"
hidden = 8

[contenders.convolution]
model = "gcn"
hidden = 8

[ablation.plain]
mode = "grid"
[ablation.plain.axes]
hidden = {levels}
"""


def write(folder: Path, levels: str) -> Path:
    path = folder / f"suite-{len(list(folder.glob('suite-*.toml')))}.toml"
    path.write_text(SUITE.format(levels=levels), encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def saved(tmp_path_factory: pytest.TempPathFactory) -> dict[str, Path]:
    folder = tmp_path_factory.mktemp("ablation_gate")
    suite, store, baseline = write(folder, "[4, 16]"), folder / "store.db", folder / "base.json"
    assert main(["baseline", str(suite), "--save", str(baseline), "--store", str(store)]) == 0
    return {"folder": folder, "suite": suite, "store": store, "baseline": baseline}


def gate(saved: dict[str, Path], suite: Path, tmp_path: Path) -> tuple[int, ElementTree.Element]:
    junit = tmp_path / "gate.xml"
    arguments = ["gate", str(suite), "--baseline", str(saved["baseline"])]
    arguments += ["--store", str(saved["store"]), "--junit", str(junit)]
    return main(arguments), ElementTree.parse(junit).getroot()


def test_baseline_keeps_each_point_apart(saved):
    document = json.loads(saved["baseline"].read_text())
    labels = ["plain[hidden=4]", "plain[hidden=16]", "convolution"]
    assert sorted(document["contenders"]) == sorted(labels)
    for label, hidden in (("plain[hidden=4]", 4), ("plain[hidden=16]", 16)):
        entry = document["contenders"][label]
        assert entry["options"]["hidden"] == hidden and entry["point"] == {"hidden": hidden}
        assert entry["contender"] == "plain"
        assert [run["seed"] for run in entry["runs"]] == [0, 1]
    keys = [run["key"] for entry in document["contenders"].values() for run in entry["runs"]]
    assert len(set(keys)) == 6  # 3 configurations x 2 seeds, none merged


def test_gate_reads_its_baseline_back_and_compares_point_with_point(saved, tmp_path, capsys):
    status, root = gate(saved, saved["suite"], tmp_path)
    out = capsys.readouterr().out
    assert status == 0 and "gate PASS" in out
    assert root.get("tests") == "12" and root.get("failures") == "0"  # 3 configurations x 4
    for label in ("plain[hidden=4]", "plain[hidden=16]"):
        case = next(
            c
            for c in root.iter("testcase")
            if c.get("classname") == f"locker_points.{label}" and c.get("name") == "reproducibility"
        )
        assert "2 runs with identical inputs gave identical metrics" in case.findtext("system-out")


def test_a_point_missing_on_either_side_is_reported_not_merged(saved, tmp_path, capsys):
    moved = write(saved["folder"], "[4, 32]")  # hidden=16 dropped, hidden=32 added
    status, root = gate(saved, moved, tmp_path)
    out = " ".join(capsys.readouterr().out.split())
    assert status == 0 and "gate WARN" in out
    assert "plain[hidden=32]: in the suite but not in the baseline; not compared" in out
    assert "plain[hidden=16]: in the baseline but not in the suite; not compared" in out
    classes = {c.get("classname") for c in root.iter("testcase") if c.get("name") == "metric"}
    assert classes == {"locker_points.plain[hidden=4]", "locker_points.convolution"}

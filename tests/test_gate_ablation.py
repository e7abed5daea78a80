"""Baselines and gates of an ablation suite: each point is kept apart and compared with itself."""

from __future__ import annotations

import json
import xml.etree.ElementTree as ElementTree
from pathlib import Path

import pytest

from harness.cli import main

# the tiny courier suite of conftest, with the features-only contender's width ablated
ABLATION = """
[ablation.features_only]
mode = "grid"
[ablation.features_only.axes]
hidden = {levels}
"""


def write(folder: Path, suite_text: str, levels: str) -> Path:
    path = folder / f"suite-{len(list(folder.glob('suite-*.toml')))}.toml"
    path.write_text(suite_text + ABLATION.format(levels=levels), encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def saved(tmp_path_factory: pytest.TempPathFactory, tiny_suite_text: str) -> dict[str, Path]:
    folder = tmp_path_factory.mktemp("ablation_gate")
    suite = write(folder, tiny_suite_text, "[4, 16]")
    store, baseline = folder / "store.db", folder / "base.json"
    assert main(["baseline", str(suite), "--save", str(baseline), "--store", str(store)]) == 0
    return {"folder": folder, "suite": suite, "store": store, "baseline": baseline}


def gate(saved: dict[str, Path], suite: Path, tmp_path: Path) -> tuple[int, ElementTree.Element]:
    junit = tmp_path / "gate.xml"
    arguments = ["gate", str(suite), "--baseline", str(saved["baseline"])]
    arguments += ["--store", str(saved["store"]), "--junit", str(junit)]
    return main(arguments), ElementTree.parse(junit).getroot()


def test_baseline_keeps_each_point_apart(saved):
    document = json.loads(saved["baseline"].read_text())
    labels = ["features_only[hidden=4]", "features_only[hidden=16]", "convolution", "attention"]
    assert sorted(document["contenders"]) == sorted(labels)
    for label, hidden in (("features_only[hidden=4]", 4), ("features_only[hidden=16]", 16)):
        entry = document["contenders"][label]
        assert entry["options"]["hidden"] == hidden and entry["point"] == {"hidden": hidden}
        assert entry["contender"] == "features_only"
        assert [run["seed"] for run in entry["runs"]] == [0, 1]
    keys = [run["key"] for entry in document["contenders"].values() for run in entry["runs"]]
    assert len(set(keys)) == 8  # 4 configurations x 2 seeds, none merged


def test_gate_reads_its_baseline_back_and_compares_point_with_point(saved, tmp_path, capsys):
    status, root = gate(saved, saved["suite"], tmp_path)
    out = capsys.readouterr().out
    assert status == 0 and "gate PASS" in out
    assert root.get("tests") == "16" and root.get("failures") == "0"  # 4 configurations x 4
    for label in ("features_only[hidden=4]", "features_only[hidden=16]"):
        case = next(
            c
            for c in root.iter("testcase")
            if c.get("classname") == f"tiny_couriers.{label}" and c.get("name") == "reproducibility"
        )
        assert "2 runs with identical inputs gave identical metrics" in case.findtext("system-out")


def test_a_point_missing_on_either_side_is_reported_not_merged(
    saved, tiny_suite_text, tmp_path, capsys
):
    moved = write(saved["folder"], tiny_suite_text, "[4, 32]")  # hidden=16 dropped, hidden=32 added
    status, root = gate(saved, moved, tmp_path)
    out = " ".join(capsys.readouterr().out.split())
    assert status == 0 and "gate WARN" in out
    assert "features_only[hidden=32]: in the suite but not in the baseline; not compared" in out
    assert "features_only[hidden=16]: in the baseline but not in the suite; not compared" in out
    classes = {c.get("classname") for c in root.iter("testcase") if c.get("name") == "metric"}
    assert classes == {
        "tiny_couriers.features_only[hidden=4]",
        "tiny_couriers.convolution",
        "tiny_couriers.attention",
    }

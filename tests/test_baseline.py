"""Baseline files: what they hold, stable form, and clear refusals of damaged files."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from harness.cli import main
from harness.errors import InputError
from harness.gate.baseline import environment_differences, read_baseline, suite_hash
from harness.planning import parse_suite

# A fictional farm co-operative: members are nodes, shared machinery bookings are edges.
SUITE = """
name = "cooperative"
seeds = [0, 1]
metric = "macro_f1"

[data]
source = "synthetic"
nodes = 120
classes = 3
feature_dimension = 6
graph_seed = 5
{extra_data}

[training]
epochs = 8
patience = 5

[contenders.members_only]
model = "mlp"
hidden = 8

[contenders.neighbours]
model = "sage"
hidden = 8
"""


def write_suite(folder: Path, extra_data: str = "") -> Path:
    path = folder / "suite.toml"
    path.write_text(SUITE.format(extra_data=extra_data))
    return path


@pytest.fixture(scope="module")
def saved(tmp_path_factory: pytest.TempPathFactory) -> dict[str, Path]:
    folder = tmp_path_factory.mktemp("baseline")
    suite, store, baseline = write_suite(folder), folder / "store.db", folder / "base.json"
    assert main(["baseline", str(suite), "--save", str(baseline), "--store", str(store)]) == 0
    return {"folder": folder, "suite": suite, "store": store, "baseline": baseline}


def test_baseline_holds_per_seed_figures_and_environment(saved):
    text = saved["baseline"].read_text()
    document = json.loads(text)
    assert document["suite"] == "cooperative" and document["metric"] == "macro_f1"
    assert set(document["environment"]) == {
        "python",
        "torch",
        "torch_geometric",
        "numpy",
        "cpu",
        "threads",
    }
    assert set(document["contenders"]) == {"members_only", "neighbours"}
    runs = document["contenders"]["neighbours"]["runs"]
    assert [run["seed"] for run in runs] == [0, 1]
    for run in runs:
        assert 0 <= run["test_metric"] <= 1 and run["test_metric"] == run["test_macro_f1"]
        assert run["seconds_per_epoch"] > 0 and run["peak_mb"] > 0 and run["params"] > 0
    assert document["task"]["data"]["nodes"] == 120
    # safe to commit: no local paths
    assert str(saved["folder"]) not in text and "/tmp" not in text
    assert read_baseline(saved["baseline"]).suite_hash == document["suite_hash"]


def test_baseline_text_is_stable(saved, tmp_path):
    """Sorted keys and two-space indentation: saving again changes nothing but the date."""
    again = tmp_path / "again.json"
    assert (
        main(
            ["baseline", str(saved["suite"]), "--save", str(again), "--store", str(saved["store"])]
        )
        == 0
    )
    first, second = json.loads(saved["baseline"].read_text()), json.loads(again.read_text())
    first.pop("saved_at"), second.pop("saved_at")
    assert first == second
    text = again.read_text()
    assert text.endswith("}\n") and text.startswith('{\n  "contenders": {')
    assert text == json.dumps(json.loads(text), indent=2, sort_keys=True) + "\n"


def test_suite_hash_covers_the_task_only():
    raw = {
        "name": "x",
        "data": {"source": "synthetic", "nodes": 50},
        "contenders": {"a": {"model": "mlp"}},
    }
    base = suite_hash(parse_suite(raw, "x.toml"))
    changed_model = {**raw, "seeds": [7], "contenders": {"a": {"model": "mlp", "dropout": 0.9}}}
    assert suite_hash(parse_suite(changed_model, "x.toml")) == base
    changed_data = {**raw, "data": {"source": "synthetic", "nodes": 51}}
    assert suite_hash(parse_suite(changed_data, "x.toml")) != base


def test_environment_differences_name_each_field():
    saved = {"python": "3.11.7", "torch": "2.13.0", "threads": 2}
    now = {"python": "3.11.7", "torch": "2.14.0", "threads": 1}
    assert environment_differences(saved, now) == [
        "threads: baseline 2, now 1",
        "torch: baseline 2.13.0, now 2.14.0",
    ]


def gate_error(saved, baseline: Path, capsys, suite: Path | None = None) -> str:
    status = main(
        [
            "gate",
            str(suite or saved["suite"]),
            "--baseline",
            str(baseline),
            "--store",
            str(saved["store"]),
        ]
    )
    captured = capsys.readouterr()
    assert status == 2
    lines = captured.err.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in captured.err
    return lines[0]


def damaged(saved, tmp_path: Path, edit) -> Path:
    path = tmp_path / "damaged.json"
    path.write_text(edit(saved["baseline"].read_text()))
    return path


def as_json(change):
    def edit(text: str) -> str:
        document = json.loads(text)
        change(document)
        return json.dumps(document, indent=2, sort_keys=True)

    return edit


def test_missing_and_empty_baselines_exit_2(saved, tmp_path, capsys):
    missing = tmp_path / "none.json"
    assert "baseline file not found" in gate_error(saved, missing, capsys)
    empty = damaged(saved, tmp_path, lambda text: "  \n")
    assert "baseline file is empty" in gate_error(saved, empty, capsys)


def test_truncated_baseline_exit_2(saved, tmp_path, capsys):
    cut = damaged(saved, tmp_path, lambda text: text[: len(text) // 2])
    message = gate_error(saved, cut, capsys)
    assert f"{cut}: baseline file is truncated: the JSON ends at line" in message


def test_invalid_json_exit_2(saved, tmp_path, capsys):
    broken = damaged(saved, tmp_path, lambda text: text.replace('"metric":', '"metric" =', 1))
    message = gate_error(saved, broken, capsys)
    assert "baseline file is not valid JSON: Expecting ':' delimiter at line" in message


def test_hand_edited_fields_exit_2_with_key_path(saved, tmp_path, capsys):
    def drop_metric(document):
        del document["contenders"]["neighbours"]["runs"][1]["test_metric"]

    message = gate_error(saved, damaged(saved, tmp_path, as_json(drop_metric)), capsys)
    assert message.endswith("contenders.neighbours.runs.1.test_metric: required key is missing")

    def impossible(document):
        document["contenders"]["members_only"]["runs"][0]["test_metric"] = 1.7

    message = gate_error(saved, damaged(saved, tmp_path, as_json(impossible)), capsys)
    assert "contenders.members_only.runs.0.test_metric: given 1.7;" in message
    array = damaged(saved, tmp_path, lambda text: "[1, 2]")
    assert "given a JSON list; allowed: a JSON object" in gate_error(saved, array, capsys)


def test_missing_contender_exit_2(saved, tmp_path, capsys):
    def remove(document):
        del document["contenders"]["neighbours"]

    message = gate_error(saved, damaged(saved, tmp_path, as_json(remove)), capsys)
    assert "contenders.neighbours: in the suite but missing from the baseline" in message
    assert "baseline has members_only" in message


def test_other_task_exit_2_saying_what_differs(saved, tmp_path, capsys):
    other = tmp_path / "other"
    other.mkdir()
    suite = write_suite(other, extra_data="edge_homophily = 0.9")
    message = gate_error(saved, saved["baseline"], capsys, suite=suite)
    assert "suite hash differs" in message
    assert "data.edge_homophily: baseline 0.7, suite 0.9" in message


def test_baseline_of_another_suite_exit_2(saved, tmp_path, capsys):
    def rename(document):
        document["suite"] = "orchard"

    message = gate_error(saved, damaged(saved, tmp_path, as_json(rename)), capsys)
    assert "baseline is of suite 'orchard', given suite 'cooperative'" in message


def test_read_baseline_raises_input_error(tmp_path):
    path = tmp_path / "b.json"
    path.write_text('{"format": "heedful baseline"}')
    with pytest.raises(InputError, match="format_version: required key is missing"):
        read_baseline(path)

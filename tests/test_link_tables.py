"""Link suites on tables read no node labels (issue 27, item 3): a nodes file without a label
column, or with one class in it, is accepted; `check` and `describe` print no class or
homophily facts, which would not apply. Node classification still refuses both."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from harness.cli import main

# fictional parcel lockers (nodes) and the courier rounds that link them (edges)
NODES = "id,f_size,f_floor\n" + "".join(f"locker-{i},{i % 4},{i % 3}\n" for i in range(24))
ONE_CLASS = "id,label,f_size,f_floor\n" + "".join(
    f"locker-{i},standard,{i % 4},{i % 3}\n" for i in range(24)
)
EDGES = "source,target\n" + "".join(
    f"locker-{i},locker-{(i + step) % 24}\n" for i in range(24) for step in (1, 5)
)
SUITE = """\
name = "locker_rounds"
seeds = 1
task = "{task}"
[data]
source = "tables"
nodes = "nodes.csv"
edges = "edges.csv"
{extra}
[split]
train = 0.6
validation = 0.2
test = 0.2
[contenders.attention]
model = "gat"
heads = 2
hidden = 4
[training]
epochs = 3
"""


def written(folder: Path, nodes: str, task: str = "link_prediction", extra: str = "") -> Path:
    (folder / "nodes.csv").write_text(nodes)
    (folder / "edges.csv").write_text(EDGES)
    path = folder / "suite.toml"
    path.write_text(SUITE.format(task=task, extra=extra))
    return path


@pytest.mark.parametrize("nodes", [NODES, ONE_CLASS], ids=["no_label_column", "one_class"])
def test_a_link_suite_without_labels_checks_runs_and_describes(tmp_path, capsys, nodes):
    suite = written(tmp_path, nodes)
    assert main(["check", str(suite)]) == 0
    out = capsys.readouterr().out
    assert "is valid: 24 nodes, 48 edges, 2 features" in out
    assert "classes" not in out and "homophily" not in out
    assert main(["describe", str(suite)]) == 0
    described = capsys.readouterr().out
    assert "nodes" in described and "classes" not in described and "homophily" not in described
    assert main(["describe", str(suite), "--format", "json"]) == 0
    profile = json.loads(capsys.readouterr().out)
    assert profile["class_counts"] == [] and profile["homophily"] is None
    store = tmp_path / "runs.db"
    assert main(["run", str(suite), "--store", str(store), "--quiet"]) == 0
    assert main(["report", str(suite), "--store", str(store), "--out", str(tmp_path / "r")]) == 0
    assert "class insensitive" not in (tmp_path / "r" / "report.md").read_text()  # no measures


def test_node_classification_still_needs_the_label_column_and_two_classes(tmp_path, capsys):
    suite = written(tmp_path, NODES, task="node_classification")
    assert main(["check", str(suite)]) == 2
    error = capsys.readouterr().err.strip()
    assert error.endswith(
        "nodes.csv: column 'label' (data.label_column) not found; columns "
        "present: id, f_size, f_floor"
    )
    assert main(["describe", str(suite)]) == 2
    assert "column 'label' (data.label_column) not found" in capsys.readouterr().err


def test_a_label_column_a_link_suite_names_must_exist(tmp_path, capsys):
    suite = written(tmp_path, NODES, extra='label_column = "kind"')
    assert main(["check", str(suite)]) == 2
    assert "column 'kind' (data.label_column) not found" in capsys.readouterr().err

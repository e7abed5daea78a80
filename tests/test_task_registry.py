"""The task registry: one contract over every registered task, and a toy task added through the
registry alone (tests/toy_task.py plus one registry line) that every stage picks up."""

from __future__ import annotations

import ast
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from sklearn.metrics import balanced_accuracy_score
from toy_task import NAME, TOY_LABELS

from harness.errors import InputError
from harness.execution.preflight import preflight
from harness.formatting import metric_label
from harness.gate.baseline import suite_hash, suite_task
from harness.planning import expand, parse_suite
from harness.schema.analysis import BREAKDOWN_KEYS
from harness.schema.gate import BaselineRun
from harness.schema.named import imported
from harness.schema.suite import Suite
from harness.schema.tasks import DEFAULT_TASK, TASKS, metric_names, task_kind
from harness.storage.tables import TEST_COLUMNS

TESTS = Path(__file__).resolve().parent


def raw_suite(task: str, **changes: object) -> dict:
    """A small suite any task takes: karate club (tasks of many graphs: networkx's graph atlas),
    shares that sum to 1, one GAT and one MLP."""
    many = task in TASKS and TASKS[task].many_graphs
    raw = {
        "name": "registry_check",
        "seeds": 2,
        "task": task,
        "data": {"source": "graph_atlas" if many else "karate"},
        "split": {"train": 0.6, "validation": 0.2, "test": 0.2},
        "training": {"epochs": 2},
        "contenders": {"attention": {"model": "gat", "heads": 2}, "plain": {"model": "mlp"}},
    }
    raw.update(changes)
    return raw


def module_imports(path: str) -> set[str]:
    """Top-level packages a "module:function" path's module imports anywhere in it."""
    module = imported(path).__module__
    source = Path(sys.modules[module].__file__).read_text(encoding="utf-8")
    found = set()
    for node in ast.walk(ast.parse(source)):
        if isinstance(node, ast.Import):
            found |= {alias.name.split(".")[0] for alias in node.names}
        elif isinstance(node, ast.ImportFrom) and node.module:
            found.add(node.module.split(".")[0])
    return found


@pytest.mark.parametrize("name", list(TASKS))
def test_every_task_declares_a_consistent_contract(name: str) -> None:
    kind = task_kind(name)
    assert len(set(kind.metric_names)) == len(kind.metrics)
    assert kind.default_metric in kind.metric_names
    for metric in kind.metrics:
        assert metric.low < metric.high
        # early stopping, tuning, verdicts and gates rank higher as better; a metric where
        # lower is better needs them to read the direction first
        assert metric.higher_is_better
        assert callable(imported(metric.scorer))
        assert "torch" not in module_imports(metric.scorer)  # scorers stay torch-free
        assert metric.every_epoch is None or callable(imported(metric.every_epoch))
        assert metric_label(metric.name) == metric.label
        assert f"test_{metric.name}" in TEST_COLUMNS
        assert f"test_{metric.name}" in BaselineRun.model_fields
    assert callable(imported(kind.data_check))
    assert kind.objective  # an entry of the training stage's objective registry
    sections = set(Suite.model_fields)
    assert set(kind.refused) <= sections and set(kind.section_checks) <= sections
    if kind.options_section is not None:
        assert kind.options_section in sections and kind.options is not None
    assert kind.compiles or kind.no_compile_reason


@pytest.mark.parametrize("name", list(TASKS))
def test_every_task_validates_plans_and_keys_its_suites(name: str) -> None:
    kind = task_kind(name)
    suite = parse_suite(raw_suite(name), "s.toml")
    assert suite.metric == kind.default_metric
    for metric in kind.metric_names:
        assert parse_suite(raw_suite(name, metric=metric), "s.toml").metric == metric
    foreign = sorted(set(metric_names()) - set(kind.metric_names))
    for metric in foreign:
        with pytest.raises(InputError, match=f"metric: given '{metric}'; allowed for task"):
            parse_suite(raw_suite(name, metric=metric), "s.toml")
    specs = expand(suite)
    assert len(specs) == 4 and {spec.task for spec in specs} == {name}
    assert all(spec.link == suite.task_options for spec in specs)
    # every task but the first names itself in its run keys and baseline hashes, so that its
    # runs never share a key with the first task's (whose keys predate tasks)
    assert kind.keyed or name == DEFAULT_TASK
    assert ("task" in suite_task(suite)) == kind.keyed
    if kind.keyed:
        first = expand(parse_suite(raw_suite(DEFAULT_TASK), "s.toml"))
        assert not {spec.key for spec in first} & {spec.key for spec in specs}


@pytest.mark.parametrize("name", list(TASKS))
def test_every_task_refuses_what_it_declares_and_says_why(name: str) -> None:
    kind = task_kind(name)
    for section, reason in kind.refused.items():
        with pytest.raises(InputError, match=f"s.toml: {section}: not available for"):
            parse_suite(raw_suite(name, **{section: {}}), "s.toml")
        with pytest.raises(InputError, match=reason):
            parse_suite(raw_suite(name, **{section: {}}), "s.toml")
    sampled = {"batching": "sampled", "fanout": "all", "epochs": 2}
    if kind.sampled_batches:
        parse_suite(raw_suite(name, training=sampled), "s.toml")
    else:
        with pytest.raises(InputError, match='training.batching: given "sampled"'):
            parse_suite(raw_suite(name, training=sampled), "s.toml")
    settings = {"breakdown": False, "degree_edges": [2, 4], "local_homophily_edges": [0, 0.5, 1]}
    for key in BREAKDOWN_KEYS:
        setting = {key: settings[key]}
        if kind.breakdown and kind.many_graphs and key != "breakdown":
            # a collection's breakdown groups its graphs by size, not nodes by these edges
            with pytest.raises(InputError, match=f"analysis: {key} groups the nodes of one"):
                parse_suite(raw_suite(name, analysis=setting), "s.toml")
        elif kind.breakdown:
            parse_suite(raw_suite(name, analysis=setting), "s.toml")
        else:
            with pytest.raises(InputError, match=f"analysis: {key} is for the per-node"):
                parse_suite(raw_suite(name, analysis=setting), "s.toml")
    for method in ("fractions", "per_class", "column"):
        split = {"method": method}
        accepted = kind.split_methods is None or method in kind.split_methods
        if not accepted:
            with pytest.raises(InputError, match=f"split: method '{method}' is for"):
                parse_suite(raw_suite(name, split=split), "s.toml")


def test_a_toy_task_is_one_module_and_one_registry_line(monkeypatch) -> None:
    """Schema, planning, the data check, the baseline hash and the metric lookup pick up
    tests/toy_task.py once its registry line is in; balanced accuracy checked against
    scikit-learn's balanced_accuracy_score (scikit-learn user guide, "Balanced accuracy")."""
    monkeypatch.setitem(TASKS, NAME, TOY_LABELS)  # the one registry line
    suite = parse_suite(raw_suite(NAME), "s.toml")
    assert suite.metric == "balanced_accuracy" and suite.task_options is None
    with pytest.raises(InputError, match="homophily_map: not available for toy labelling: the"):
        parse_suite(raw_suite(NAME, homophily_map={}), "s.toml")
    with pytest.raises(InputError, match="split: method 'column' is for node classification"):
        parse_suite(raw_suite(NAME, split={"method": "column"}), "s.toml")
    with pytest.raises(InputError, match="metric: given 'accuracy'; allowed for task 'toy_"):
        parse_suite(raw_suite(NAME, metric="accuracy"), "s.toml")
    specs = expand(suite)
    node_suite = parse_suite(raw_suite(DEFAULT_TASK), "s.toml")
    assert {spec.task for spec in specs} == {NAME}
    assert not {spec.key for spec in specs} & {spec.key for spec in expand(node_suite)}
    assert suite_task(suite)["task"] == NAME and suite_hash(suite) != suite_hash(node_suite)
    facts = preflight(suite, "s.toml")  # the declared data check draws every seed's split
    assert facts.nodes == 34
    assert metric_label("balanced_accuracy") == "balanced accuracy"
    labels = np.array([0, 0, 0, 1, 1, 2])
    probabilities = np.eye(3)[[0, 0, 1, 1, 1, 0]]
    metric = TASKS[NAME].metric("balanced_accuracy")
    expected = balanced_accuracy_score(labels, [0, 0, 1, 1, 1, 0])
    assert metric.score(probabilities, labels, {"classes": 3}) == pytest.approx(expected)
    assert expected == pytest.approx((2 / 3 + 1 + 0) / 3)


def test_a_toy_task_gets_its_table_store_column_and_baseline_figure() -> None:
    """The suite schema, the store's tables and the baseline schema are built when first
    imported: with the registry line in before that, suites take the task's own `[toy]` table
    (keyed, refused for other tasks), the store has a `test_balanced_accuracy` column and
    baselines its figure."""
    program = (
        "from dataclasses import replace\n"
        "from harness.schema.tasks import TASKS\n"
        "from toy_task import TOY_LABELS, NAME, ToyOptions\n"
        "TASKS[NAME] = replace(TOY_LABELS, options_section='toy', options=ToyOptions)\n"
        "from harness.errors import InputError\n"
        "from harness.planning import expand, parse_suite\n"
        "from harness.storage.tables import TEST_COLUMNS\n"
        "from harness.schema.gate import BaselineRun\n"
        "raw = {'name': 's', 'task': NAME, 'data': {'source': 'karate'},\n"
        "       'contenders': {'plain': {'model': 'mlp'}}, 'toy': {'class_weight_power': 0.5}}\n"
        "suite = parse_suite(raw, 's.toml')\n"
        "keys = {spec.key for spec in expand(suite)}\n"
        "plain = parse_suite({**raw, 'toy': {}}, 's.toml')\n"
        "try:\n"
        "    parse_suite({**raw, 'task': 'node_classification', 'metric': 'accuracy'}, 's.toml')\n"
        "except InputError as error:\n"
        "    print(str(error).startswith(\"s.toml: toy: [toy] is for task = 'toy_labels'\"))\n"
        "print(suite.task_options.class_weight_power,\n"
        "      keys.isdisjoint(spec.key for spec in expand(plain)),\n"
        "      'test_balanced_accuracy' in TEST_COLUMNS,\n"
        "      'test_balanced_accuracy' in BaselineRun.model_fields)\n"
    )
    path = os.pathsep.join([str(TESTS), os.environ.get("PYTHONPATH", "")])
    done = subprocess.run(
        [sys.executable, "-c", program],
        capture_output=True,
        text=True,
        env={**os.environ, "PYTHONPATH": path},
        check=True,
    )
    assert done.stdout.split() == ["True", "0.5", "True", "True", "True"]


@pytest.mark.parametrize("name", list(TASKS))
def test_check_says_when_compiling_does_not_apply(name: str) -> None:
    kind = task_kind(name)
    raw = raw_suite(name, training={"epochs": 2, "compile": True})
    notes = preflight(parse_suite(raw, "s.toml"), "s.toml").notes
    expected = (
        [] if kind.compiles else [f"s.toml: training.compile: warning: {kind.no_compile_reason}"]
    )
    assert [note for note in notes if "training.compile" in note] == expected

"""Nightly gate end to end on a tiny suite: pass, regression, noise, costs, reproducibility."""

from __future__ import annotations

import json
import shutil
import xml.etree.ElementTree as ElementTree
from dataclasses import replace
from pathlib import Path

import pytest

import harness.execution.runs
from harness.cli import main

# A fictional courier network: depots are nodes, regular routes are edges, four depot kinds.
SUITE = """
name = "courier_gate"
seeds = {seeds}
metric = "accuracy"

[data]
source = "synthetic"
nodes = 300
classes = 3
average_degree = 6
edge_homophily = 0.8
feature_dimension = 8
feature_signal = 1.5
graph_seed = 3

[split]
train = 0.4
validation = 0.2
test = 0.4

[training]
epochs = 30
patience = 10

[contenders.attention]
model = "gat"
heads = 2
hidden = 8
dropout = {attention_dropout}

[contenders.features_only]
model = "mlp"
hidden = 16

[gate]
tolerance_points = 2.0
significance = 0.05
time_ratio = 3.0
time_action = "{time_action}"
"""


def write_suite(
    folder: Path,
    name: str,
    seeds: str = "[0, 1, 2, 3]",
    attention_dropout: float = 0.5,
    time_action: str = "warn",
) -> Path:
    path = folder / name
    path.write_text(
        SUITE.format(seeds=seeds, attention_dropout=attention_dropout, time_action=time_action)
    )
    return path


@pytest.fixture(scope="module")
def saved(tmp_path_factory: pytest.TempPathFactory) -> dict[str, Path]:
    """One trained store and its baseline, shared by the tests of this module."""
    folder = tmp_path_factory.mktemp("gate")
    suite = write_suite(folder, "suite.toml")
    store = folder / "store.db"
    baseline = folder / "baseline.json"
    assert main(["baseline", str(suite), "--save", str(baseline), "--store", str(store)]) == 0
    return {"folder": folder, "suite": suite, "store": store, "baseline": baseline}


def gate(saved: dict[str, Path], suite: Path, tmp_path: Path, baseline: Path | None = None):
    junit, markdown = tmp_path / "gate.xml", tmp_path / "gate.md"
    status = main(
        [
            "gate",
            str(suite),
            "--baseline",
            str(baseline or saved["baseline"]),
            "--store",
            str(saved["store"]),
            "--junit",
            str(junit),
            "--markdown",
            str(markdown),
        ]
    )
    return status, ElementTree.parse(junit).getroot(), markdown.read_text()


def case(root: ElementTree.Element, contender: str, check: str) -> ElementTree.Element:
    for element in root.iter("testcase"):
        if element.get("classname") == f"courier_gate.{contender}" and element.get("name") == check:
            return element
    raise AssertionError(f"no test case {contender}.{check}")


def test_unchanged_suite_passes(saved, tmp_path, capsys):
    status, root, markdown = gate(saved, saved["suite"], tmp_path)
    out = capsys.readouterr().out
    assert status == 0
    assert "gate PASS" in out
    assert root.get("failures") == "0" and root.get("tests") == "8"
    # stored runs were reused: identical keys, identical metrics, zero difference
    assert "4 runs with identical inputs gave identical metrics" in case(
        root, "attention", "reproducibility"
    ).findtext("system-out")
    assert "| attention | " in markdown and "+0.00 | +0.00 to +0.00" in markdown


def test_injected_regression_fails_naming_contender_drop_and_interval(saved, tmp_path, capsys):
    """Dropout 0.95 on the attention contender: its accuracy drops far beyond 2 points."""
    broken = write_suite(tmp_path, "suite.toml", attention_dropout=0.95)
    status, root, markdown = gate(saved, broken, tmp_path)
    out = capsys.readouterr().out
    assert status == 1
    assert "gate FAIL" in out
    failure = case(root, "attention", "metric").find("failure")
    assert failure is not None
    message = failure.get("message")
    assert message.startswith("attention: accuracy dropped ")
    assert "95% t-interval " in message and "paired t-test" in message
    drop = float(message.split("dropped ")[1].split(" points")[0])
    low_text, high_text = message.split("t-interval ")[1].split(" points")[0].split(" to ")
    low, high = float(low_text), float(high_text)
    assert drop > 2.0 and low <= -drop <= high < 0  # the interval holds the drop and excludes 0
    assert case(root, "features_only", "metric").find("failure") is None
    assert "| fail |" in markdown and "- fail metric: attention: accuracy dropped" in markdown


def test_noise_level_change_passes(saved, tmp_path, capsys):
    """Other seeds of the same configuration: no seed is shared, Welch's test, no failure."""
    reseeded = write_suite(tmp_path, "suite.toml", seeds="[10, 11, 12, 13]")
    status, root, _ = gate(saved, reseeded, tmp_path)
    capsys.readouterr()
    assert status == 0
    for contender in ("attention", "features_only"):
        metric = case(root, contender, "metric")
        assert metric.find("failure") is None
        assert "Welch t-test" in metric.findtext("system-out")
        # no run has the same inputs as a baseline run, so that check is skipped
        assert case(root, contender, "reproducibility").find("skipped") is not None


def test_slowed_contender_fails_time_check(saved, tmp_path, monkeypatch, capsys):
    """A contender whose epochs take five times as long as in its baseline is caught.

    Deterministic, no clock: the baseline's seconds per epoch are set to 2 ms for every run, and
    the runs trained afresh (in a copy of the store) report 2 ms (attention) or 10 ms
    (features_only), so the time check sees a ratio of exactly 5.00 against a limit of 3. The
    metrics are left as trained, which the reproducibility check confirms.
    """
    store = tmp_path / "fresh.db"
    perform = harness.execution.runs.perform

    def timed(spec, *args, **kwargs):
        result = perform(spec, *args, **kwargs)
        return replace(result, seconds_per_epoch=0.010 if spec.model == "mlp" else 0.002)

    def fixed_time(document):
        for contender in document["contenders"].values():
            for run in contender["runs"]:
                run["seconds_per_epoch"] = 0.002

    monkeypatch.setattr(harness.execution.runs, "perform", timed)
    strict = write_suite(tmp_path, "suite.toml", time_action="fail")
    fixed = edited(saved, tmp_path, fixed_time)
    status, root, _ = gate({**saved, "store": store}, strict, tmp_path, fixed)
    out = capsys.readouterr().out
    assert status == 1
    failure = case(root, "features_only", "time").find("failure")
    assert failure is not None and "seconds per epoch x5.00 above limit" in failure.get("message")
    assert case(root, "attention", "time").find("failure") is None
    assert case(root, "features_only", "metric").find("failure") is None
    assert "identical metrics" in case(root, "features_only", "reproducibility").findtext(
        "system-out"
    )
    assert "fail time: features_only" in out


def edited(saved: dict[str, Path], tmp_path: Path, change) -> Path:
    document = json.loads(saved["baseline"].read_text())
    change(document)
    path = tmp_path / "edited.json"
    path.write_text(json.dumps(document, indent=2))
    return path


def test_memory_growth_against_an_older_baseline_fails(saved, tmp_path, capsys):
    """A baseline whose recorded peak memory is edited down stands for a model that grew since."""

    def shrink(document):
        for run in document["contenders"]["attention"]["runs"]:
            run["peak_mb"] = run["peak_mb"] / 2

    status, root, markdown = gate(saved, saved["suite"], tmp_path, edited(saved, tmp_path, shrink))
    capsys.readouterr()
    assert status == 1
    failure = case(root, "attention", "memory").find("failure")
    assert failure is not None and "peak memory x2.00 above limit" in failure.get("message")
    assert case(root, "features_only", "memory").find("failure") is None


def test_reproducibility_change_and_other_environment_are_reported(saved, tmp_path, capsys):
    """Same run keys with a different stored metric: reported, and within tolerance not failed."""

    def move(document):
        document["contenders"]["features_only"]["runs"][1]["test_metric"] += 0.001
        document["environment"]["torch"] = "0.0.1"

    status, root, markdown = gate(saved, saved["suite"], tmp_path, edited(saved, tmp_path, move))
    out = capsys.readouterr().out
    assert status == 0
    assert "gate WARN" in out
    text = case(root, "features_only", "reproducibility").findtext("system-out")
    assert text.startswith("warning: features_only: reproducibility change")
    assert "on 1 of 4 runs (seed 1:" in text
    assert "environment differs from the baseline's: torch: baseline 0.0.1" in out
    assert "torch: baseline 0.0.1" in markdown


def test_gate_runs_are_kept_in_history(saved, tmp_path, capsys):
    from harness.storage.gate_history import load_history

    store = tmp_path / "copy.db"
    shutil.copy(saved["store"], store)
    before = len(load_history(store, "courier_gate"))
    assert gate({**saved, "store": store}, saved["suite"], tmp_path)[0] == 0
    history = load_history(store, "courier_gate")
    assert len(history) == before + 2
    assert set(history["contender"].tail(2)) == {"attention", "features_only"}
    assert main(["history", str(saved["suite"]), "--store", str(store)]) == 0
    assert "Gate history: courier_gate" in capsys.readouterr().out


def test_bad_gate_settings_and_output_paths_exit_2(saved, tmp_path, capsys):
    suite = tmp_path / "suite.toml"
    suite.write_text(saved["suite"].read_text().replace("tolerance_points", "tolerance_point"))
    status = main(["gate", str(suite), "--baseline", str(saved["baseline"])])
    err = capsys.readouterr().err
    assert status == 2
    assert "gate: unknown key 'tolerance_point' (did you mean 'tolerance_points'?)" in err
    suite.write_text(saved["suite"].read_text().replace("time_ratio = 3.0", "time_ratio = 0.5"))
    assert main(["gate", str(suite), "--baseline", str(saved["baseline"])]) == 2
    assert "gate.time_ratio: given 0.5;" in capsys.readouterr().err
    with pytest.raises(SystemExit) as stopped:
        main(["gate", str(saved["suite"]), "--baseline", "b.json", "--junit", str(tmp_path)])
    assert stopped.value.code == 2
    assert "--junit: given" in capsys.readouterr().err


def test_tuning_suites_are_refused(saved, tmp_path, capsys):
    """Tuning picks new settings each time, so there is no fixed configuration to gate."""
    suite = tmp_path / "suite.toml"
    suite.write_text(saved["suite"].read_text() + "\n[tuning]\ntrials = 4\n")
    assert main(["baseline", str(suite), "--save", str(tmp_path / "b.json")]) == 2
    assert "tuning: a gate compares fixed contender settings" in capsys.readouterr().err
    assert main(["gate", str(suite), "--baseline", str(saved["baseline"])]) == 2
    assert "tuning: a gate compares fixed contender settings" in capsys.readouterr().err

"""Command line: check, run and show on the tiny suite, in-process through harness.cli.main."""

from __future__ import annotations

import io
import json
import re
import shutil
import subprocess
import sys
from pathlib import Path

import pandas as pd
import pytest
from torch_geometric.utils import homophily

from harness.analysis.stats import summarise, t_interval
from harness.cli import main
from harness.data import load_graph
from harness.planning import load_suite
from harness.report.documents.summary import summary_table
from harness.report.formats.terminal import rich_table
from harness.storage import store

CONTENDERS = ("attention", "convolution", "features_only")
JSON_FIELDS = {
    "suite",
    "contender",
    "model",
    "options",
    "seed",
    "val",
    "test",
    "epochs",
    "seconds",
    "seconds_per_epoch",
    "params",
    "peak_mb",
    "key",
}


STORE_HINT = "run a suite first or pass --store"


def table_rows(text: str) -> list[list[str]]:
    """Cells of each body row of the tables in `text`: the lines between a table's second and
    third rule, split at runs of two or more spaces (cells hold single spaces only)."""
    rows, rules = [], 0
    for line in text.splitlines():
        if line.strip() and set(line.strip()) == {"─"}:
            rules = (rules + 1) % 3
        elif rules == 2:
            rows.append(re.split(r"\s{2,}", line.strip()))
    return rows


def flat(text: str) -> str:
    """Output with rich's line wrapping undone."""
    return " ".join(text.split())


def test_check_counts_runs_and_reports_measured_homophily(tiny_suite, capsys):
    assert main(["check", str(tiny_suite)]) == 0
    out = flat(capsys.readouterr().out)
    graph = load_graph(load_suite(tiny_suite).data)
    edges = graph.edge_index.size(1) // 2
    assert f"suite 'tiny_couriers' is valid: 120 nodes, {edges} edges, 3 classes, 8 features" in out
    edge = float(homophily(graph.edge_index, graph.y, method="edge"))
    node = float(homophily(graph.edge_index, graph.y, method="node"))
    assert f"measured homophily: edge {edge:.3f}, node {node:.3f}" in out
    for contender in CONTENDERS:
        assert f"{contender}: 2 runs" in out
    assert "6 runs in total" in out


def test_run_prints_the_table_and_a_rerun_reuses_everything(finished_store, tmp_path, capsys):
    suite, original = finished_store
    copy = tmp_path / "runs.db"
    shutil.copy(original, copy)
    assert main(["run", str(suite), "--store", str(copy), "--quiet"]) == 0
    raw = capsys.readouterr().out
    out = flat(raw)
    assert f"0 runs trained, 6 reused from {copy}" in out
    assert "Suite: tiny_couriers" in out
    headers = ("contender", "test accuracy", "95% t-interval", "s/epoch", "params", "tensor MiB")
    for header in headers:
        assert header in out
    rows: dict[str, list[str]] = {}
    for cells in table_rows(raw):  # the summary table comes first; later tables repeat names
        rows.setdefault(cells[0], cells[1:])
    summary = summarise(store.load_runs(copy))
    for contender, model in zip(CONTENDERS, ("gat", "gcn", "mlp"), strict=True):
        expected = summary.set_index("contender").loc[contender]
        cells = rows[contender]
        assert cells[:2] == [model, "2"]  # model kind, seeds
        assert cells[2] == f"{expected['mean']:.3f} ± {expected['std']:.3f}"
        assert cells[5] == f"{expected['params']:,}"


def test_terminal_intervals_follow_the_suites_confidence(finished_store, tmp_path, capsys):
    suite, original = finished_store
    copy = tmp_path / "runs.db"
    shutil.copy(original, copy)
    ninety = tmp_path / "tiny.toml"  # [analysis] is not part of the run key: all 6 runs reused
    ninety.write_text(suite.read_text() + "\n[analysis]\nconfidence = 0.9\n", encoding="utf-8")
    assert main(["run", str(ninety), "--store", str(copy), "--quiet"]) == 0
    raw = capsys.readouterr().out
    assert "90% t-interval" in flat(raw) and "95%" not in raw
    runs = store.load_runs(copy)
    values = runs[runs["contender"] == "attention"]["test_metric"].to_numpy(dtype=float)
    low, high = t_interval(values, 0.9)
    shown = f"{max(low, 0):.3f} to {min(high, 1):.3f}"  # clipped to accuracy's range
    shown += " clipped" if low < 0 or high > 1 else ""
    rows = {cells[0]: cells[1:] for cells in reversed(table_rows(raw))}
    assert rows["attention"][3] == shown


def test_best_contender_is_highlighted(finished_store):
    summary = summarise(store.load_runs(finished_store[1]))
    table = rich_table(summary_table(summary, "tiny"))
    best = int(summary["mean"].idxmax())
    assert [row.style for row in table.rows].count("bold green") == 1
    assert table.rows[best].style == "bold green"


def test_show_json_has_one_record_per_run_with_documented_fields(finished_store, capsys):
    suite, store_file = finished_store
    assert main(["show", str(suite), "--store", str(store_file), "--format", "json"]) == 0
    records = json.loads(capsys.readouterr().out)
    assert len(records) == 6
    assert all(JSON_FIELDS <= set(record) for record in records)
    assert {(r["contender"], r["seed"]) for r in records} == {
        (c, s) for c in CONTENDERS for s in (0, 1)
    }
    attention = next(r for r in records if r["contender"] == "attention")
    assert attention["model"] == "gat" and attention["options"]["heads"] == 2
    assert 0 <= attention["test"] <= 1 and attention["epochs"] >= 1 and attention["params"] > 0
    runs = store.load_runs(store_file).set_index("key")
    for record in records:
        assert record["test"] == runs.loc[record["key"], "test_metric"]
        assert record["extras"] == runs.loc[record["key"], "extras"]
    assert {head["layer"] for head in attention["extras"]["attention"]["heads"]} == {1, 2}


def test_show_csv_markdown_and_table_agree(finished_store, capsys):
    suite, store_file = finished_store
    assert main(["show", "tiny_couriers", "--store", str(store_file), "--format", "csv"]) == 0
    frame = pd.read_csv(io.StringIO(capsys.readouterr().out))
    assert len(frame) == 6 and set(frame["contender"]) == set(CONTENDERS)
    assert main(["show", "--store", str(store_file), "--format", "md"]) == 0
    lines = capsys.readouterr().out.strip().split("\n")
    assert lines[0].startswith("| suite | contender | model |") and len(lines) == 2 + 6
    assert main(["show", str(suite), "--store", str(store_file)]) == 0
    out = flat(capsys.readouterr().out)
    assert all(contender in out for contender in CONTENDERS)


def test_show_and_run_errors_are_one_line_with_exit_2(tiny_suite, tmp_path, capsys):
    absent = tmp_path / "absent.db"
    assert main(["show", "--store", str(absent)]) == 2
    err = capsys.readouterr().err
    assert (
        err
        == f"heedful: error: {absent}: result store not found; run a suite first or pass --store\n"
    )
    assert not absent.exists()
    with pytest.raises(SystemExit) as stopped:
        main(["run", str(tiny_suite), "--jobs", "0"])
    assert stopped.value.code == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "--jobs: given 0; allowed: a whole number >= 1" in err


@pytest.mark.slow  # the installed command, in processes of its own
def test_installed_command_prints_runs_and_fails_bad_input_with_exit_2(finished_store, tmp_path):
    """The `heedful` console script, as a user runs it: output complete, exit statuses kept."""
    command = Path(sys.executable).with_name("heedful")
    suite, store_file = finished_store
    shown = subprocess.run(
        [command, "show", str(suite), "--store", str(store_file), "--format", "json"],
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert shown.returncode == 0, shown.stderr
    assert len(json.loads(shown.stdout)) == 6
    missing = tmp_path / "missing.toml"
    failed = subprocess.run([command, "check", str(missing)], capture_output=True, text=True)
    assert failed.returncode == 2
    assert failed.stderr.count("\n") == 1 and str(missing) in failed.stderr
    assert "Traceback" not in failed.stderr


def test_help_and_readme_list_the_same_commands(capsys):
    with pytest.raises(SystemExit):
        main(["--help"])
    listed = set(re.findall(r"^    (\w+)\s", capsys.readouterr().out, flags=re.MULTILINE))
    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    table = readme.split("## Commands", 1)[1].split("\n## ", 1)[0]
    documented = set(re.findall(r"^\| `heedful (\w+)", table, flags=re.MULTILINE))
    assert "describe" in listed and "profile" not in listed
    assert listed == documented
    assert "heedful profile" not in readme

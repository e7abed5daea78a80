"""Hostile names: every user string printed to the terminal or written as Markdown is escaped.

Suite files admit plain names only (harness/schema/suite.py), but a store written before that
rule, a file path or a class label in a node table can still hold rich markup or Markdown.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import pytest

from harness.cli import main
from harness.execution.runs import record_of
from harness.planning import expand, load_suite
from harness.results import RunResult
from harness.storage import store

SUITE_NAME = "closing[/x]tag"
LABELS_CONTENDER = '[contenders.plain]\nmodel = "mlp"\n'
NAMES = {
    "attention": "c[/]",
    "convolution": "[bold red]x[/bold red]",
    "features_only": "<script>|*_",
}


def crafted_store(suite_path: Path, store_path: Path) -> None:
    """Runs of the suite under hostile suite and contender names, as an older store held them."""
    level = {"gat": 0.2, "gcn": 0.1, "mlp": 0.0}
    for spec in expand(load_suite(suite_path)):
        spec = dataclasses.replace(spec, suite=SUITE_NAME, contender=NAMES[spec.contender])
        value = 0.5 + 0.1 * spec.seed + level[spec.model]
        scores = dict.fromkeys(("accuracy", "macro_f1", "roc_auc"), value)
        result = RunResult(value, value, scores, 3, 2, 0.1, 0.01, 10, 1.0, [value], {})
        store.save_run(store_path, record_of(spec, result))


@pytest.fixture
def hostile(tmp_path: Path, tiny_suite_text: str) -> tuple[Path, Path]:
    folder = tmp_path / "[bold]a"  # markup in a path printed by `check` and `report`
    folder.mkdir()
    suite_path = folder / "suite.toml"
    suite_path.write_text(tiny_suite_text, encoding="utf-8")
    store_path = tmp_path / "runs.db"
    crafted_store(suite_path, store_path)
    return suite_path, store_path


def test_check_prints_a_path_with_markup_as_given(hostile, capsys):
    suite_path, _ = hostile
    assert main(["check", str(suite_path)]) == 0
    printed = " ".join(capsys.readouterr().out.split())  # piped output wraps at 100 columns
    assert f"{suite_path}: suite 'tiny_couriers' is valid" in printed


def test_show_and_report_print_stored_hostile_names_literally(hostile, tmp_path, capsys):
    _, store_path = hostile
    assert main(["show", "--store", str(store_path)]) == 0
    shown = capsys.readouterr().out
    assert f"Suite: {SUITE_NAME}" in shown
    assert "[bold red]x[/bold red]" in shown and "c[/]" in shown  # not bold "x", no crash
    out = tmp_path / "out[red]"
    assert main(["report", SUITE_NAME, "--store", str(store_path), "--out", str(out)]) == 0
    printed = " ".join(capsys.readouterr().out.split())
    assert "[bold red]x[/bold red]" in printed and f"files written to {out}" in printed


def test_show_markdown_escapes_names_as_the_report_does(hostile, capsys):
    _, store_path = hostile
    assert main(["show", "--store", str(store_path), "--format", "md"]) == 0
    text = capsys.readouterr().out
    assert "<script>" not in text
    assert r"&lt;script&gt;\|\*\_" in text and r"closing\[/x\]tag" in text
    for line in text.strip().splitlines():  # an escaped | splits no cell
        assert line.count("|") - line.count(r"\|") == 19


def test_a_class_label_with_markup_is_described_as_given(tmp_path: Path, capsys):
    nodes = "id,label,f\n" + "".join(
        f"n{i},{'lbl[/]' if i % 2 else '[bold]b'},{i % 3}\n" for i in range(12)
    )
    edges = "source,target\n" + "".join(f"n{i},n{(i + 1) % 12}\n" for i in range(12))
    suite = 'name = "labels"\n[data]\nsource = "tables"\nnodes = "nodes.csv"\nedges = "edges.csv"\n'
    files = {"nodes.csv": nodes, "edges.csv": edges, "suite.toml": suite + LABELS_CONTENDER}
    for name, text in files.items():
        (tmp_path / name).write_text(text, encoding="utf-8")
    assert main(["describe", str(tmp_path / "suite.toml")]) == 0
    printed = capsys.readouterr().out
    assert "lbl[/] 6 (50%)" in printed and "[bold]b 6 (50%)" in printed

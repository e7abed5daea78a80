"""A report of a partly run suite says what is missing, and warnings recorded in runs show."""

from __future__ import annotations

import shutil
import sqlite3
from pathlib import Path

from harness.cli import main
from harness.storage import store


def test_a_partial_report_names_missing_contenders_and_seeds(finished_store, tmp_path, capsys):
    suite_path, stored = finished_store
    store_path = tmp_path / "runs.db"
    shutil.copy(stored, store_path)
    with sqlite3.connect(store_path) as connection:
        connection.execute("DELETE FROM runs WHERE contender = 'features_only'")
        connection.execute("DELETE FROM runs WHERE contender = 'convolution' AND seed = 1")
    out = tmp_path / "report"
    assert main(["report", str(suite_path), "--store", str(store_path), "--out", str(out)]) == 0
    notice = (
        "incomplete: 3 of 6 runs stored; no runs yet of features_only; convolution lacks seeds 1; "
        "figures cover the stored runs only"
    )
    printed = " ".join(capsys.readouterr().out.split())
    assert printed.startswith(notice)
    text = (out / "report.md").read_text(encoding="utf-8")
    assert text.splitlines()[2] == f"**{notice.replace('_', chr(92) + '_')}**"
    # the header counts seeds per contender as the headline does (one shared seed here)
    assert "1 to 2 seeds per contender" in text and "1 seed" in text.split("\n> ")[1]
    assert notice in (out / "report.html").read_text(encoding="utf-8")


NODES = "id,label,split,f_a,f_b\n" + "".join(
    f"n{i},{('blue', 'green', 'purple')[i % 3]},"
    f"{'test' if i % 3 < 2 and i % 4 == 0 else ('train', 'validation')[i % 2]},"
    f"{(i * 7) % 5}.0,{i % 3}.5\n"
    for i in range(36)
)


def test_a_test_split_missing_a_class_is_recorded_and_shown(tmp_path: Path, capsys):
    """No purple node in the test split: ROC-AUC covers blue and green only, and says so."""
    (tmp_path / "nodes.csv").write_text(NODES, encoding="utf-8")
    edges = "".join(f"n{i},n{(i + 1) % 36}\nn{i},n{(i + 3) % 36}\n" for i in range(36))
    (tmp_path / "edges.csv").write_text("source,target\n" + edges, encoding="utf-8")
    suite = tmp_path / "suite.toml"
    suite.write_text(
        'name = "colours"\nseeds = 1\n[data]\nsource = "tables"\nnodes = "nodes.csv"\n'
        'edges = "edges.csv"\nsplit_column = "split"\nfeature_prefix = "f_"\n'
        '[split]\nmethod = "column"\n[training]\nepochs = 3\n'
        '[contenders.plain]\nmodel = "mlp"\nhidden = 4\n',
        encoding="utf-8",
    )
    store_path = tmp_path / "runs.db"
    assert main(["run", str(suite), "--store", str(store_path), "--quiet"]) == 0
    warning = "the test split holds 2 of 3 classes; ROC-AUC covers those present"
    assert store.load_runs(store_path)["extras"].iloc[0]["warnings"] == [warning]
    printed = " ".join(capsys.readouterr().out.split())
    assert f"warning: plain: {warning} (1 of 1 runs)" in printed
    out = tmp_path / "report"
    assert main(["report", str(suite), "--store", str(store_path), "--out", str(out)]) == 0
    assert f"warning: plain: {warning} (1 of 1 runs)" in " ".join(capsys.readouterr().out.split())
    assert f"warning: plain: {warning}" in (out / "report.html").read_text(encoding="utf-8")

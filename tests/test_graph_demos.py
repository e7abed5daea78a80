"""The two graph classification demos in CI-sized form: the shipped suite files, edited as text
to fewer graphs, seeds and epochs, run to the end, store every planned run and print a verdict.

Both scenarios are invented: a fictional dye works screening candidate molecules
(examples/make_dye_molecules.py) and a fictional circuit-board inspection (planted motifs)."""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest

from harness.cli import main
from harness.planning import HOP_CACHE_VARIABLE, expand, load_suite
from harness.storage import store

ROOT = Path(__file__).resolve().parents[1]


def edited(name: str, changes: list[tuple[str, str]]) -> str:
    """The shipped suite's text with each (old, new) replaced exactly once."""
    text = (ROOT / "suites" / name).read_text(encoding="utf-8")
    for old, new in changes:
        assert text.count(old) == 1, f"suites/{name} no longer holds {old!r} once"
        text = text.replace(old, new)
    return text


def run_to_the_end(suite: Path, store_file: Path, capsys) -> str:
    assert main(["run", str(suite), "--store", str(store_file), "--quiet"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    keys = {spec.key for spec in expand(load_suite(suite))}
    runs = store.load_runs(store_file, [load_suite(suite).name])
    assert set(runs["key"]) == keys and len(runs) == len(keys)
    assert runs["test_macro_f1"].between(0, 1).all()
    return out


@pytest.fixture(autouse=True)
def own_cache(tmp_path, monkeypatch):
    monkeypatch.setenv(HOP_CACHE_VARIABLE, str(tmp_path / "cache"))


@pytest.mark.slow  # trains dozens of runs
def test_the_dye_screen_demo_runs_in_ci_size(tmp_path, capsys):
    # 240 of the 1,053 candidates keep the run small; the scaffold split still has its cores
    candidates = pd.read_csv(ROOT / "examples" / "dyes" / "candidates.csv")
    candidates.head(240).to_csv(tmp_path / "candidates.csv", index=False)
    text = edited(
        "dye_screen.toml",
        [
            ('file = "../examples/dyes/candidates.csv"', 'file = "candidates.csv"'),
            ("seeds = 5", "seeds = 2"),
            ("epochs = 40", "epochs = 2"),
        ],
    )
    suite = tmp_path / "dye_screen.toml"
    suite.write_text(text, encoding="utf-8")
    out = run_to_the_end(suite, tmp_path / "runs.db", capsys)
    assert "Verdict: attention (gat, 4 heads)" in out and "the best baseline" in out
    assert "graph size" in out


@pytest.mark.slow  # trains dozens of runs
def test_the_circuit_board_demo_runs_in_ci_size(tmp_path, capsys):
    text = edited(
        "circuit_boards.toml",
        [
            ("graphs = 400", "graphs = 48"),
            ("seeds = 3", "seeds = 2"),
            ("epochs = 40", "epochs = 2"),
        ],
    )
    suite = tmp_path / "circuit_boards.toml"
    suite.write_text(text, encoding="utf-8")
    out = run_to_the_end(suite, tmp_path / "runs.db", capsys)
    assert "Verdict: attention" in out and "the best baseline" in out
    readouts = {spec.options.readout for spec in expand(load_suite(suite))}
    assert readouts == {"attention", "mean", "sum", "max"}

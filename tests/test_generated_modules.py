"""PyG's generated modules land in Heedful's cache folder, not in the system's temporary folder,
and the files of ended processes do not pile up."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

from harness.models.generated import FOLDER, process_folder, remove_ended

ROOT = Path(__file__).resolve().parents[1]


def run_in_a_process(tmp_path: Path, store: str, suite_text: str) -> None:
    suite = tmp_path / "suite.toml"
    suite.write_text(suite_text, encoding="utf-8")
    environment = {
        **os.environ,
        "PYTHONPATH": str(ROOT),
        "TMPDIR": str(tmp_path / "system-tmp"),
        "HEEDFUL_CACHE": str(tmp_path / "cache"),
    }
    arguments = [sys.executable, "-m", "harness.cli", "run", str(suite), "--quiet"]
    done = subprocess.run(
        [*arguments, "--store", str(tmp_path / store)],
        env=environment,
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert done.returncode == 0, done.stderr


@pytest.mark.slow  # two commands in processes of their own
def test_generated_modules_stay_in_the_cache_and_ended_processes_leave_none(
    tmp_path, tiny_suite_text
):
    (tmp_path / "system-tmp").mkdir()
    run_in_a_process(tmp_path, "first.db", tiny_suite_text)  # gat, gcn and mlp contenders
    assert list((tmp_path / "system-tmp").iterdir()) == []
    [first] = (tmp_path / "cache" / FOLDER).iterdir()
    expected = [  # PyG names each file after its module, plus a random suffix
        "torch_geometric.nn.conv.gat_conv_GATConv_edge_updater_",
        "torch_geometric.nn.conv.gat_conv_GATConv_propagate_",
        "torch_geometric.nn.conv.gcn_conv_GCNConv_propagate_",
    ]
    generated = sorted(p.name for p in first.iterdir())
    assert len(generated) == 3
    assert all(name.startswith(prefix) for name, prefix in zip(generated, expected, strict=True))
    run_in_a_process(tmp_path, "second.db", tiny_suite_text)  # a new store: both runs train again
    [second] = (tmp_path / "cache" / FOLDER).iterdir()
    assert second != first and len(list(second.iterdir())) == 3


def test_a_live_process_keeps_its_folder(tmp_path):
    mine = process_folder(tmp_path)
    (mine / "module.py").write_text("x = 1\n", encoding="utf-8")
    ended = tmp_path / FOLDER / mine.name.replace(f"-{os.getpid()}", "-999999999")
    ended.mkdir()
    other_machine = tmp_path / FOLDER / "elsewhere.example-1"
    other_machine.mkdir()
    remove_ended(tmp_path / FOLDER)
    assert (mine / "module.py").exists() and other_machine.exists() and not ended.exists()

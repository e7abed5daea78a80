"""A PyG dataset folder may not run code: files PyG would unpickle load only if Heedful saw
them made (harness/data/pyg_folder.py), or the suite says the folder is trusted."""

from __future__ import annotations

import pickle
from pathlib import Path

import pytest

from harness.cli import main
from harness.data.pyg_folder import MANIFEST, check_folder, record_folder
from harness.errors import InputError
from harness.planning import expand, load_suite

SUITE = """\
name = "pages"
seeds = 1
[data]
source = "pyg"
dataset = "WebKB"
name = "Texas"
root = "datasets"
{trusted}
[split]
method = "column"
[contenders.plain]
model = "mlp"
"""


class Payload:
    """Unpickling this writes a file: what a crafted pre_transform.pt could do instead."""

    def __init__(self, marker: Path) -> None:
        self.marker = marker

    def __reduce__(self):
        return (open, (str(self.marker), "w"))


def webkb_folder(tmp_path: Path, trusted: bool = False) -> Path:
    """WebKB's Texas files as PyG expects them, every raw file empty; gives the suite file."""
    raw = tmp_path / "datasets" / "texas" / "raw"
    raw.mkdir(parents=True)
    names = ["out1_node_feature_label.txt", "out1_graph_edges.txt"]
    names += [f"texas_split_0.6_0.2_{i}.npz" for i in range(10)]
    for name in names:
        (raw / name).write_bytes(b"")
    suite = tmp_path / "suite.toml"
    suite.write_text(SUITE.format(trusted="trusted = true" if trusted else ""), encoding="utf-8")
    return suite


def test_a_crafted_pickle_in_the_folder_is_refused_before_pyg_loads_it(tmp_path, capsys):
    suite = webkb_folder(tmp_path)
    processed = tmp_path / "datasets" / "texas" / "processed"
    processed.mkdir()
    marker = tmp_path / "payload-ran"
    (processed / "pre_transform.pt").write_bytes(pickle.dumps(Payload(marker)))
    assert main(["check", str(suite)]) == 2
    error = capsys.readouterr().err.strip()
    assert len(error.splitlines()) == 1 and "Traceback" not in error
    assert f"{processed / 'pre_transform.pt'} would be unpickled by PyG" in error
    assert "data.trusted = true" in error
    assert not marker.exists()


def test_a_pickle_without_a_pickle_name_is_found_by_its_first_byte(tmp_path):
    (tmp_path / "ind.graph").write_bytes(pickle.dumps({"a": [1]}))
    (tmp_path / "notes.txt").write_text("plain text", encoding="utf-8")
    with pytest.raises(InputError, match="ind.graph would be unpickled"):
        check_folder(str(tmp_path))


def test_files_heedful_saw_made_load_and_an_edited_one_is_refused(tmp_path):
    made = tmp_path / "texas" / "processed" / "data.pt"
    made.parent.mkdir(parents=True)
    made.write_bytes(pickle.dumps([1, 2, 3]))
    record_folder(str(tmp_path))  # as after a load that wrote it
    assert (tmp_path / MANIFEST).is_file()
    check_folder(str(tmp_path))
    made.write_bytes(pickle.dumps([1, 2, 4]))
    with pytest.raises(InputError, match="data.pt would be unpickled"):
        check_folder(str(tmp_path))


def test_empty_raw_files_give_one_line(tmp_path, capsys):
    suite = webkb_folder(tmp_path, trusted=True)
    assert main(["check", str(suite)]) == 2
    error = capsys.readouterr().err.strip()
    assert len(error.splitlines()) == 1 and "Traceback" not in error
    assert error.startswith("heedful: error: data: cannot load WebKB from ")


def test_trusting_a_folder_changes_no_run_key_or_baseline_hash(tmp_path):
    """`trusted` says nothing about the figures: run keys and baseline hashes stay."""
    from harness.gate.baseline import suite_hash

    suite = load_suite(webkb_folder(tmp_path, trusted=True))
    assert suite.data.trusted
    untrusted = suite.model_copy(update={"data": suite.data.model_copy(update={"trusted": False})})
    assert [s.key for s in expand(suite)] == [s.key for s in expand(untrusted)]
    assert suite_hash(suite) == suite_hash(untrusted)

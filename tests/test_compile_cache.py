"""Compiled code goes to `compile/` under Heedful's cache folder (issue 27, item 13): torch sets
TORCHINDUCTOR_CACHE_DIR to a temporary folder of its own when imported, which is not the
user's choice; a value the user set still wins."""

from __future__ import annotations

import pytest
import torch

import harness.training.compiled
from harness.training.compiled import CACHE_VARIABLE, use_compile_cache


def compile_something() -> None:
    """A small function through inductor, torch's default compiler, which writes C++ files."""
    torch._dynamo.reset()
    doubled = torch.compile(lambda x: torch.sin(x) * 2 + 1, backend="inductor", dynamic=False)
    assert torch.allclose(doubled(torch.ones(3)), torch.sin(torch.ones(3)) * 2 + 1)


@pytest.mark.slow  # compiles, with the C++ compiler in processes of its own
def test_compiled_files_land_in_the_cache_folder_even_after_torch_set_its_default(
    tmp_path, monkeypatch
):
    from torch._inductor.runtime.cache_dir_utils import cache_dir, default_cache_dir

    monkeypatch.setenv(CACHE_VARIABLE, default_cache_dir())  # what importing torch leaves
    monkeypatch.setattr(harness.training.compiled, "CACHES_SET", set())
    use_compile_cache(str(tmp_path / "first"))
    assert cache_dir() == str(tmp_path / "first" / "compile")
    use_compile_cache(str(tmp_path / "second"))  # another suite's folder, same process
    assert cache_dir() == str(tmp_path / "second" / "compile")
    compile_something()
    written = [path for path in (tmp_path / "second" / "compile").rglob("*") if path.is_file()]
    assert written, "inductor wrote nothing under the cache folder"
    monkeypatch.undo()
    torch._inductor.utils.clear_caches()  # later tests compile under the restored folder


def test_a_folder_the_user_chose_wins(tmp_path, monkeypatch):
    monkeypatch.setenv(CACHE_VARIABLE, str(tmp_path / "mine"))
    monkeypatch.setattr(harness.training.compiled, "CACHES_SET", set())
    use_compile_cache(str(tmp_path / "heedful"))
    assert harness.training.compiled.os.environ[CACHE_VARIABLE] == str(tmp_path / "mine")


def test_compile_true_on_a_tiny_graph_is_a_stated_warning(write_suite, capsys):
    """120 nodes: compiling costs tens of seconds per run and cannot pay back (README, Large
    graphs: from 200,000 edges); "auto" stays quiet, since it decides by itself."""
    from harness.cli import main
    from tests.conftest import TINY_SUITE

    told = TINY_SUITE.replace("epochs = 15", "epochs = 15\ncompile = true")
    assert main(["check", str(write_suite(told))]) == 0
    warnings = [line for line in capsys.readouterr().out.splitlines() if "warning" in line]
    assert len(warnings) == 3  # one per contender; 338 undirected edges, both directions
    assert (
        "contenders.attention: warning: compile = true on 676 directed edges for 15 epochs "
        "will not pay back" in warnings[0]
    )
    assert main(["check", str(write_suite(TINY_SUITE, "auto.toml"))]) == 0
    assert "warning" not in capsys.readouterr().out

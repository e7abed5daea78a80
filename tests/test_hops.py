"""k-hop edge sets: small worked examples, the estimate, the disk cache and the budget."""

from __future__ import annotations

from pathlib import Path

import pytest
import torch

from harness.data import hops
from harness.data.hops import (
    build_hop_edges,
    check_hop_budget,
    estimate_hop_edges,
    graph_hash,
    hop_edges,
)
from harness.errors import InputError


def path_graph(nodes: int) -> torch.Tensor:
    """0 - 1 - 2 - ... as an undirected edge list."""
    left = torch.arange(nodes - 1)
    return torch.cat([torch.stack([left, left + 1]), torch.stack([left + 1, left])], dim=1)


def pairs(edge_index: torch.Tensor) -> set[tuple[int, int]]:
    return {tuple(p) for p in edge_index.T.tolist()}


def test_path_graph_by_hand() -> None:
    edges = path_graph(4)
    assert pairs(build_hop_edges(edges, 4, 1)) == pairs(edges)
    two = pairs(build_hop_edges(edges, 4, 2))
    assert two == pairs(edges) | {(0, 2), (2, 0), (1, 3), (3, 1)}
    assert len(pairs(build_hop_edges(edges, 4, 3))) == 4 * 3  # everyone reaches everyone


def test_no_self_pairs_and_sorted() -> None:
    edges = build_hop_edges(path_graph(6), 6, 2)
    assert not bool((edges[0] == edges[1]).any())
    keys = (edges[0] * 6 + edges[1]).tolist()
    assert keys == sorted(keys)


def test_estimate_is_an_upper_bound_and_exact_on_a_path() -> None:
    edges = path_graph(30)
    for radius in (1, 2, 3):
        built = build_hop_edges(edges, 30, radius).size(1)
        assert estimate_hop_edges(edges, 30, radius) >= built
    assert estimate_hop_edges(edges, 30, 1) == edges.size(1)


def test_cache_is_written_once_and_read_back(tmp_path: Path, monkeypatch) -> None:
    edges = path_graph(10)
    first = hop_edges(edges, 10, 2, tmp_path)
    files = list(tmp_path.glob("hops-*-radius2.pt"))
    assert len(files) == 1 and graph_hash(edges, 10) in files[0].name

    def refuse(*_):
        raise AssertionError("built again although cached")

    monkeypatch.setattr(hops, "build_hop_edges", refuse)
    assert torch.equal(hop_edges(edges, 10, 2, tmp_path), first)


def test_hash_changes_with_the_graph() -> None:
    assert graph_hash(path_graph(5), 5) != graph_hash(path_graph(6), 6)
    assert graph_hash(path_graph(5), 5) != graph_hash(path_graph(5), 6)


def test_budget_error_gives_estimate_and_budget() -> None:
    edges = path_graph(50)
    check_hop_budget(edges, 50, 2, [4, 1], 1.0, "s.toml: contenders.a.hop_radius")
    with pytest.raises(InputError) as error:
        check_hop_budget(edges, 50, 2, [4, 1], 0.0001, "s.toml: contenders.a.hop_radius")
    message = str(error.value)
    assert message.startswith("s.toml: contenders.a.hop_radius: given 2;")
    # 292 walks of length <= 2 bound the 194 pairs: walks back to the start count too
    assert "292 edges" in message and "hops.memory_budget_mb = 0.0001" in message
    assert "\n" not in message


def cached_file(tmp_path: Path, edges: torch.Tensor, nodes: int, radius: int = 2) -> Path:
    return tmp_path / f"hops-{graph_hash(edges, nodes)}-radius{radius}.pt"


@pytest.mark.parametrize(
    ("planted", "problem"),
    [
        (lambda path, _: path.write_bytes(b"garbage, not a tensor"), "not a readable hop cache"),
        (lambda path, other: torch.save(other, path), "holds no digest"),
        (
            lambda path, other: torch.save({"edges": other, "digest": "0" * 64}, path),
            "its edges do not match its digest for this graph at radius 2",
        ),
        (
            lambda path, _: torch.save({"edges": torch.zeros(3), "digest": "0"}, path),
            "holds no edge list",
        ),
    ],
    ids=["garbage", "other_edges_without_digest", "other_edges_wrong_digest", "not_edges"],
)
def test_a_bad_cache_file_is_named_rebuilt_and_never_believed(tmp_path, capsys, planted, problem):
    """Issue 27, item 9: a garbage file failed every run; another graph's valid edge set
    silently changed results. Both are now named, rebuilt and replaced by a checked file."""
    edges = path_graph(8)
    path = cached_file(tmp_path, edges, 8)
    other = build_hop_edges(path_graph(9), 9, 2)  # a valid edge set of another graph
    planted(path, other)
    got = hop_edges(edges, 8, 2, tmp_path)
    assert torch.equal(got, build_hop_edges(edges, 8, 2))
    warning = capsys.readouterr().err.strip()
    assert warning.startswith(f"heedful: warning: {path}: {problem}")
    assert warning.endswith("; rebuilt") and len(warning.splitlines()) == 1
    assert torch.equal(hop_edges(edges, 8, 2, tmp_path), got)  # the rewritten file is believed
    assert capsys.readouterr().err == ""


def test_a_file_copied_from_another_graph_with_its_digest_does_not_match(tmp_path, capsys):
    small, large = path_graph(8), path_graph(9)
    hop_edges(large, 9, 2, tmp_path)
    cached_file(tmp_path, large, 9).rename(cached_file(tmp_path, small, 8))
    assert torch.equal(hop_edges(small, 8, 2, tmp_path), build_hop_edges(small, 8, 2))
    assert "do not match its digest" in capsys.readouterr().err

"""Degree groups of the per-node breakdown, and the [analysis] bin-edge settings."""

from __future__ import annotations

import pytest
import torch
from torch_geometric.data import Data
from torch_geometric.utils import to_undirected

from harness.analysis.node_groups import degree_groups, node_groups
from harness.errors import InputError
from harness.planning import expand, load_suite


def star_and_path() -> Data:
    """Node 0 joined to 1..5 (a star), then a path 5-6-7-8; node 9 unlabelled on node 8.

    Degrees: 0: 5; 1-4: 1; 5: 2; 6, 7: 2; 8: 2; 9: 1.
    """
    pairs = [(0, i) for i in range(1, 6)] + [(5, 6), (6, 7), (7, 8), (8, 9)]
    edges = to_undirected(torch.tensor(pairs).t(), num_nodes=10)
    labels = torch.tensor([0, 1, 1, 0, 0, 1, 1, 0, 0, -1])
    return Data(edge_index=edges, y=labels, num_nodes=10)


def test_degree_quartiles_merge_repeated_cuts():
    """Degrees sorted: 1,1,1,1,1,2,2,2,2,5; numpy's quartiles 1, 1.5, 2 give groups d <= 1,
    d = 2 (the cut 1.5 and 2 both fall there) and d >= 3."""
    groups = degree_groups(star_and_path(), [])
    assert groups.labels == ("1", "2", "3-5")
    assert groups.of_node.tolist() == [2, 0, 0, 0, 0, 1, 1, 1, 1, -1]


def test_degree_edges_set_in_the_suite():
    groups = degree_groups(star_and_path(), [2, 7])
    assert groups.labels == ("1", "2-6", "7+")
    assert groups.of_node.tolist()[:9] == [1, 0, 0, 0, 0, 1, 1, 1, 1]


def test_bin_edges_come_from_the_analysis_table_and_enter_no_run_key(write_suite, tiny_suite_text):
    plain = load_suite(write_suite(tiny_suite_text, "plain.toml"))
    table = "\n[analysis]\nlocal_homophily_edges = [0, 0.5, 1]\ndegree_edges = [3]\n"
    custom = load_suite(write_suite(tiny_suite_text + table, "custom.toml"))
    assert [s.key for s in expand(plain)] == [s.key for s in expand(custom)]
    groupings = node_groups(star_and_path(), custom.analysis)
    assert [g.labels for g in groupings] == [
        ("1-2", "3-5"),
        ("0.0-0.5", "0.5-1.0", "no labelled neighbours"),
    ]


@pytest.mark.parametrize(
    ("table", "message"),
    [
        ("local_homophily_edges = [0.1, 1]", "analysis.local_homophily_edges: given [0.1, 1];"),
        ("local_homophily_edges = [0, 0.6, 0.4, 1]", "allowed: rising bin edges from 0 to 1"),
        ("local_homophily_edges = [0]", "allowed: rising bin edges from 0 to 1"),
        ("degree_edges = [4, 2]", "analysis.degree_edges: given [4, 2]; allowed: rising"),
        ("degree_edges = [0, 2]", "allowed: rising degrees of at least 1"),
    ],
)
def test_bad_bin_edges_are_one_line_errors(write_suite, tiny_suite_text, table, message):
    with pytest.raises(InputError) as caught:
        load_suite(write_suite(tiny_suite_text + f"\n[analysis]\n{table}\n"))
    assert message in str(caught.value) and "\n" not in str(caught.value)

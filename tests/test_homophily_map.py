"""Homophily map: synthetic graphs matched to the suite's data, and where the data falls."""

from __future__ import annotations

import pandas as pd
import pytest

from harness.analysis.homophily_map import summarise_map
from harness.cli import main
from harness.data import load_graph
from harness.data.profile import profile_graph
from harness.errors import InputError
from harness.planning import map_specs, map_suite_name, matched_section, parse_suite

RAW = {
    "name": "clubmap",
    "seeds": 1,
    "data": {"source": "karate"},
    "split": {"method": "per_class", "train_per_class": 2, "validation_per_class": 2},
    "training": {"epochs": 2, "patience": 2},
    "contenders": {"convolution": {"model": "gcn", "hidden": 4}, "plain": {"model": "mlp"}},
    "homophily_map": {"levels": [0.9, 0.2], "seeds": 2},
}


def test_synthetic_graphs_match_the_data_in_size_degree_and_classes() -> None:
    suite = parse_suite(RAW, "map.toml")
    profile = profile_graph(load_graph(suite.data))
    section = matched_section(profile, 0.2, suite)
    assert (section.nodes, section.classes, section.feature_dimension) == (34, 2, 34)
    assert section.average_degree == pytest.approx(2 * 78 / 34, abs=1e-3)
    assert section.class_balance == [17.0, 17.0]
    generated = profile_graph(load_graph(section))
    assert generated.nodes == 34 and generated.class_counts == [17, 17]


def test_one_run_per_level_contender_and_seed() -> None:
    suite = parse_suite(RAW, "map.toml")
    specs = map_specs(suite, profile_graph(load_graph(suite.data)))
    assert len(specs) == 2 * 2 * 2
    assert {s.suite for s in specs} == {map_suite_name(suite)} == {"clubmap:homophily_map"}
    assert [s.point["edge_homophily"] for s in specs[::4]] == [0.2, 0.9]  # levels sorted
    assert len({s.key for s in specs}) == len(specs)


def test_map_runs_use_the_suites_hop_cache(monkeypatch, tmp_path) -> None:
    raw = {**RAW, "hops": {"cache": str(tmp_path / "suite-cache")}}
    monkeypatch.delenv("HEEDFUL_CACHE", raising=False)
    suite = parse_suite(raw, "map.toml")
    profile = profile_graph(load_graph(suite.data))
    assert {s.hop_cache for s in map_specs(suite, profile)} == {str(tmp_path / "suite-cache")}
    monkeypatch.setenv("HEEDFUL_CACHE", str(tmp_path / "machine-cache"))
    assert {s.hop_cache for s in map_specs(suite, profile)} == {str(tmp_path / "machine-cache")}


def test_summary_marks_the_nearest_level() -> None:
    suite = parse_suite(RAW, "map.toml")
    profile = profile_graph(load_graph(suite.data))  # edge homophily 0.859
    runs = pd.DataFrame(
        {
            "point": [{"edge_homophily": h} for h in (0.2, 0.2, 0.9, 0.9, 0.2, 0.9)],
            "contender": [
                "convolution",
                "convolution",
                "convolution",
                "convolution",
                "plain",
                "plain",
            ],
            "test_metric": [0.4, 0.6, 0.9, 0.8, 0.7, 0.6],
        }
    )
    summary = summarise_map(runs, profile, "accuracy")
    assert summary.nearest_level == 0.9
    assert summary.best_at_nearest == "convolution"
    low = summary.table.query("level == 0.2 and contender == 'convolution'").iloc[0]
    assert low["mean"] == pytest.approx(0.5) and low["seeds"] == 2


def test_levels_are_checked() -> None:
    with pytest.raises(
        InputError, match=r"homophily_map.levels: given \[0.5, 1.5\]; allowed: edge"
    ):
        parse_suite({**RAW, "homophily_map": {"levels": [0.5, 1.5]}}, "map.toml")


def test_run_prints_the_map_with_the_data_marked(write_suite, store_path, capsys) -> None:
    suite = write_suite(
        """\
        name = "clubmap"
        seeds = 1
        [data]
        source = "karate"
        [split]
        method = "per_class"
        train_per_class = 2
        validation_per_class = 2
        [training]
        epochs = 2
        patience = 2
        [contenders.plain]
        model = "mlp"
        hidden = 4
        [homophily_map]
        levels = [0.2, 0.9]
        seeds = 1
        """
    )
    assert main(["run", str(suite), "--store", str(store_path), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "Homophily map" in out and "your data 0.859" in out
    assert out.index("0.2 ") < out.index("your data 0.859") < out.index("0.9 ")

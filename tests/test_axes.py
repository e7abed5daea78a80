"""Attention diagnostics of stored runs per variant and per axis level, and the grouped table."""

from __future__ import annotations

import pandas as pd
import pytest

from harness.analysis.axes import attention_by_level, attention_by_variant, label_points
from harness.cli import main
from harness.storage import store


def run(point: dict, seed: int, entropy: float, same: float) -> dict:
    mean = {
        "entropy_ratio": entropy,
        "self_share": 0.2,
        "uniform_self_share": 0.25,
        "same_label_share": same,
        "neighbour_homophily": 0.4,
    }
    return {
        "suite": "s",
        "contender": "attention",
        "point": point,
        "seed": seed,
        "extras": {"attention": {"mean": mean}},
    }


def test_one_at_a_time_levels_are_read_on_the_base_slice() -> None:
    base = {"heads": 4, "hop_radius": 1}
    runs = pd.DataFrame(
        [
            run(base, 0, 0.9, 0.5),
            run(base, 1, 0.7, 0.7),
            run({"heads": 1, "hop_radius": 1}, 0, 0.5, 0.45),
            run({"heads": 4, "hop_radius": 2}, 0, 0.99, 0.41),
        ]
    )
    levels = attention_by_level(runs).set_index(["axis", "level"])
    assert levels.loc[("heads", "4"), "entropy_ratio"] == pytest.approx(0.8)  # base, two seeds
    assert levels.loc[("heads", "1"), "same_label_share"] == pytest.approx(0.45)
    assert levels.loc[("hop_radius", "2"), "entropy_ratio"] == pytest.approx(0.99)
    assert len(levels) == 4  # the hop_radius=2 run is not part of the heads axis


def test_grid_levels_pool_the_other_axes() -> None:
    runs = pd.DataFrame(
        [
            run({"heads": h, "merge": m}, 0, entropy, 0.5)
            for (h, m), entropy in {
                (1, "a"): 0.2,
                (1, "b"): 0.4,
                (4, "a"): 0.6,
                (4, "b"): 0.8,
            }.items()
        ]
    )
    levels = attention_by_level(runs).set_index(["axis", "level"])
    assert levels.loc[("heads", "1"), "entropy_ratio"] == pytest.approx(0.3)
    assert levels.loc[("merge", "b"), "entropy_ratio"] == pytest.approx(0.6)


def test_variants_are_labelled_with_their_point() -> None:
    runs = pd.DataFrame([run({"heads": 1}, 0, 0.5, 0.5), run({}, 0, 0.5, 0.5)])
    runs.loc[1, "contender"] = "convolution"
    runs.at[1, "extras"] = {}
    assert label_points(runs)["contender"].tolist() == ["attention[heads=1]", "convolution"]
    variants = attention_by_variant(runs)
    assert variants["variant"].tolist() == ["attention[heads=1]"]  # no diagnostics: left out


ABLATION = """
[ablation.attention]
[ablation.attention.axes]
heads = [2, 1]
"""


def test_run_prints_the_grouped_table_and_stores_diagnostics(
    write_suite, tiny_suite_text, store_path, capsys
) -> None:
    suite = write_suite(tiny_suite_text + ABLATION)
    assert main(["run", str(suite), "--store", str(store_path), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "Ablation of 'attention' by axis" in out
    assert "Attention diagnostics" in out
    assert "attention[heads=1]" in out
    runs = store.load_runs(store_path)
    attention = runs[runs["contender"] == "attention"]
    assert sorted(p["heads"] for p in attention["point"]) == [1, 1, 2, 2]
    for extras in attention["extras"]:
        records = extras["attention"]["heads"]
        assert {r["layer"] for r in records} == {1, 2}
        assert 0 < extras["attention"]["mean"]["entropy_ratio"] <= 1
    assert all("attention" not in e for e in runs[runs["model"] != "gat"]["extras"])

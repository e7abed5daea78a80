"""New-node arrival figures reach the terminal, the report and the CSV files."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats as scipy_stats

from harness.analysis.suite_report import analyse
from harness.cli import main
from harness.report.documents.suite_tables import all_tables, frames

# seconds per new node over three seeds, as an inductive run stores them
UPDATE = [0.0020, 0.0024, 0.0022]
FULL = [0.0150, 0.0170, 0.0160]


def arrival(seed: int, difference: float) -> dict:
    """extras.arrival of one inductive run on seed `seed`."""
    figures = {"update_seconds_per_new_node": UPDATE[seed], "full_seconds_per_new_node": FULL[seed]}
    return {"arrival": figures | {"max_difference": difference, "radius": 2, "batches": 10}}


def crafted(run) -> pd.DataFrame:
    rows = [run("attention", "gat", s, 0.7, extras=arrival(s, 1e-7)) for s in range(3)]
    differences = [0.0, 3e-5, 0.0]
    rows += [run("convolution", "gcn", s, 0.6, extras=arrival(s, differences[s])) for s in range(3)]
    return pd.DataFrame(rows)


def test_arrival_summary_per_contender_with_intervals_speed_up_and_flag(crafted_run):
    report = analyse(crafted(crafted_run))
    rows = report.arrival.set_index("variant")
    attention = rows.loc["attention"]
    update = 1000 * np.array(UPDATE)
    half = scipy_stats.t.ppf(0.975, 2) * update.std(ddof=1) / math.sqrt(3)
    assert attention["update_ms"] == pytest.approx(2.2)
    assert attention["update_low"] == pytest.approx(2.2 - half)
    assert attention["full_ms"] == pytest.approx(16.0)
    assert attention["speed_up"] == pytest.approx(16.0 / 2.2)
    assert not attention["difference_flagged"]
    assert rows.loc["convolution", "max_difference"] == 3e-5
    assert rows.loc["convolution", "difference_flagged"]
    table = next(part for part in all_tables(report) if part.name == "arrival")
    cells = {row[0]: row for row in table.rows}
    assert cells["attention"][3].startswith("2.200 (") and cells["attention"][5] == "7.27x"
    assert cells["convolution"][6] == "3.0e-05 over limit"
    assert set(frames(report)["arrival"]["variant"]) == {"attention", "convolution"}


def test_transductive_reports_have_no_arrival_table(crafted_run):
    runs = crafted(crafted_run).assign(extras=[{}] * 6)
    report = analyse(runs)
    assert report.arrival.empty and "arrival" not in frames(report)
    assert all(part.name != "arrival" for part in all_tables(report))


def test_run_of_an_inductive_suite_prints_the_arrival_table(write_suite, tmp_path, capsys):
    suite = write_suite(
        """
        name = "clubhouse_arrival"
        seeds = 2
        setting = "inductive"
        [data]
        source = "karate"
        [split]
        method = "per_class"
        train_per_class = 6
        validation_per_class = 3
        [training]
        epochs = 3
        patience = 3
        [contenders.neighbours]
        model = "sage"
        hidden = 8
        [contenders.plain]
        model = "mlp"
        hidden = 8
        """
    )
    store = tmp_path / "runs.db"
    assert main(["run", str(suite), "--store", str(store), "--quiet"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "New-node arrival" in out and "update ms/node" in out
    assert "Milliseconds per node: mean with its 95% t-interval in brackets" in out
    assert "neighbours 2 2 " in out  # two seeds, radius 2 (two layers, one hop)
    report_folder = tmp_path / "report"
    assert main(["report", str(suite), "--out", str(report_folder), "--store", str(store)]) == 0
    assert "New-node arrival" in (report_folder / "report.md").read_text(encoding="utf-8")
    assert (report_folder / "csv" / "arrival.csv").exists()

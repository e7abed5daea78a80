"""Gate history: appended per gate run, read back as a DataFrame, shown with trends, plotted."""

from __future__ import annotations

import os

import pandas as pd
import pytest
from sqlalchemy import text

from harness.cli import main
from harness.formatting import sparkline
from harness.gate.baseline import build_baseline, contender_labels
from harness.gate.compare import evaluate
from harness.gate.records import history_records
from harness.planning import expand, parse_suite
from harness.report.documents.document import Document, Plot
from harness.report.documents.trend import TREND_TITLE, trend_figure, trend_png
from harness.report.formats import html
from harness.schema.gate import BaselineFile
from harness.storage.database import opened
from harness.storage.gate_history import (
    GateRecord,
    append,
    load_history,
    stored_history,
)

# A fictional bicycle-share network: docks are nodes, frequent rides between docks are edges.
RAW = {
    "name": "docks",
    "seeds": [0, 1, 2],
    "metric": "accuracy",
    "data": {"source": "synthetic", "nodes": 60},
    "contenders": {"attention": {"model": "gat"}, "features_only": {"model": "mlp"}},
    "gate": {"tolerance_points": 1.0, "memory_action": "fail"},
}
ENVIRONMENT = {
    "python": "3.11.7",
    "torch": "2.13.0",
    "torch_geometric": "2.8.1",
    "numpy": "2.4.6",
    "cpu": "test CPU",
    "threads": 2,
}


def runs_of(specs, metric: dict[str, list[float]], seconds: float, memory: float) -> pd.DataFrame:
    """Stored-run rows with chosen figures (no training: history needs only the figures)."""
    rows = []
    for spec in specs:
        value = metric[spec.contender][spec.seed]
        rows.append(
            {
                "contender": spec.contender,
                "seed": spec.seed,
                "key": spec.key,
                "test_metric": value,
                "val_metric": value,
                "test_accuracy": value,
                "test_macro_f1": value,
                "test_roc_auc": value,
                "epochs": 10,
                "params": 100,
                "seconds": 1.0,
                "seconds_per_epoch": seconds,
                "peak_mb": memory,
            }
        )
    return pd.DataFrame(rows)


@pytest.fixture
def stored(tmp_path):
    """Three gate runs a day apart: unchanged, attention drops 10 points, attention recovers."""
    suite = parse_suite(RAW, "docks.toml")
    specs = expand(suite)
    labels = contender_labels(specs)
    good = {"attention": [0.80, 0.82, 0.81], "features_only": [0.60, 0.61, 0.62]}
    worse = {"attention": [0.70, 0.71, 0.72], "features_only": [0.60, 0.61, 0.62]}
    baseline = BaselineFile.model_validate(
        build_baseline(suite, specs, runs_of(specs, good, 0.01, 1.0), ENVIRONMENT)
    )
    store = tmp_path / "store.db"
    nights = [(good, 0.01, 1.0), (worse, 0.012, 1.0), (good, 0.011, 1.5)]
    for day, (metric, seconds, memory) in enumerate(nights):
        runs = runs_of(specs, metric, seconds, memory)
        outcome = evaluate(suite, labels, baseline, runs, ENVIRONMENT, [], 1.8e9 + day * 86400)
        append(store, history_records(outcome))
    return store


def test_history_holds_one_row_per_gate_run_and_contender(stored):
    history = load_history(stored, "docks")
    assert len(history) == 6 and history["gate_id"].nunique() == 3
    attention = history[history["contender"] == "attention"].reset_index(drop=True)
    assert attention["metric_mean"].round(4).tolist() == [0.81, 0.71, 0.81]
    assert attention["difference"].round(4).tolist() == [0.0, -0.1, 0.0]
    assert attention["contender_status"].tolist() == ["pass", "fail", "fail"]
    assert attention["verdicts"][1] == {
        "memory": "pass",
        "metric": "fail",
        "reproducibility": "warn",
        "time": "pass",
    }
    assert attention["verdicts"][2]["memory"] == "fail"  # 1.5 MB against 1.0 MB, limit x1.2
    assert history["gate_status"].tolist() == ["pass", "pass", "fail", "fail", "fail", "fail"]
    assert history["environment"][0] == ENVIRONMENT
    assert not history["environment_differs"].any()
    assert load_history(stored, "other suite").empty


def test_history_command_shows_latest_values_and_trends(stored, capsys):
    assert main(["history", "docks", "--store", str(stored)]) == 0
    out = capsys.readouterr().out
    assert "Gate history: docks, 3 gate runs, 2027-01-15" in out
    attention = next(line for line in out.splitlines() if line.strip().startswith("attention"))
    assert "0.810 █▁█" in attention and "✓✗✗" in attention
    features = next(line for line in out.splitlines() if line.strip().startswith("features_only"))
    assert "0.610 ▁▁▁" in features


def test_history_of_a_suite_without_gate_runs_exit_2(stored, tmp_path, capsys):
    assert main(["history", "elsewhere", "--store", str(stored)]) == 2
    assert "no gate runs stored for suite 'elsewhere'" in capsys.readouterr().err
    assert main(["history", "docks", "--store", str(tmp_path / "none.db")]) == 2
    assert "result store not found" in capsys.readouterr().err


def test_sparkline_scales_over_at_least_the_given_span():
    assert sparkline([0.0, 0.5, 1.0]) == "▁▅█"
    assert sparkline([0.700, 0.701, 0.700], least_span=0.02) == "▁▁▁"
    assert sparkline([1.0, float("nan"), 2.0]) == "▁ █"
    assert sparkline([]) == ""


def test_trend_plot_has_one_line_per_contender(stored):
    history = load_history(stored, "docks")
    figure = trend_figure(history)
    top, bottom = figure.axes
    assert [line.get_label() for line in top.get_lines()] == ["attention", "features_only"]
    assert list(top.get_lines()[0].get_ydata()) == pytest.approx([0.81, 0.71, 0.81])
    assert list(bottom.get_lines()[0].get_ydata()) == pytest.approx([0.01, 0.012, 0.011])
    assert trend_png(history)[:8] == b"\x89PNG\r\n\x1a\n"


def test_html_report_gains_the_trend_plot_only_with_history(stored, tmp_path):
    png = trend_png(stored_history(stored, "docks"))
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    page = html.render(Document("docks", plots=(Plot("gate_trend", TREND_TITLE, png),)))
    assert f"<figcaption>{TREND_TITLE}</figcaption>" in page and "data:image/png;base64," in page
    assert trend_png(stored_history(stored, "other suite")) is None
    assert trend_png(stored_history(tmp_path / "none.db", "docks")) is None
    assert "<figure>" not in html.render(Document("docks"))


def test_importing_the_trend_plot_keeps_the_matplotlib_backend() -> None:
    """Drawing on a bare Figure needs no pyplot: whoever imports us keeps their backend."""
    import subprocess
    import sys

    probe = "import harness.report.documents.trend, matplotlib; print(matplotlib.get_backend())"
    env = {**os.environ, "MPLBACKEND": "svg"}
    shown = subprocess.run(
        [sys.executable, "-c", probe], capture_output=True, text=True, env=env, check=True
    )
    assert shown.stdout.strip() == "svg"


# the gate_history table exactly as the versions that kept it in harness/gate/ created it
# (SQLite reads DOUBLE PRECISION as a floating-point column, so one statement serves both)
OLD_HISTORY_SCHEMA = """
CREATE TABLE gate_history (
    gate_id TEXT NOT NULL, suite TEXT NOT NULL, contender TEXT NOT NULL,
    gated_at DOUBLE PRECISION NOT NULL, metric TEXT NOT NULL, metric_mean DOUBLE PRECISION,
    baseline_mean DOUBLE PRECISION, difference DOUBLE PRECISION,
    difference_low DOUBLE PRECISION, difference_high DOUBLE PRECISION, p_value DOUBLE PRECISION,
    seconds_per_epoch DOUBLE PRECISION, peak_mb DOUBLE PRECISION, verdicts TEXT NOT NULL,
    contender_status TEXT NOT NULL, gate_status TEXT NOT NULL, environment TEXT NOT NULL,
    environment_differs INTEGER NOT NULL, PRIMARY KEY (gate_id, contender)
)
"""
OLD_ROW = (
    "INSERT INTO gate_history VALUES ('0123456789abcdef', 'docks', 'attention', 1.8e9, "
    "'accuracy', 0.71, 0.81, -0.1, -0.12, -0.08, 0.004, 0.012, 1.0, "
    """'{"memory": "pass", "metric": "fail", "time": "pass"}', 'fail', 'fail', """
    """'{"threads": 2}', 1)"""
)


def test_a_history_written_by_the_old_code_reads_and_grows(any_store, stored):
    with opened(any_store, write=True) as connection:
        connection.execute(text(OLD_HISTORY_SCHEMA))
        connection.execute(text(OLD_ROW))
    old = load_history(any_store, "docks")
    assert old.drop(columns=["verdicts", "environment"]).iloc[0].to_dict() == {
        "gate_id": "0123456789abcdef",
        "suite": "docks",
        "contender": "attention",
        "gated_at": 1.8e9,
        "metric": "accuracy",
        "metric_mean": 0.71,
        "baseline_mean": 0.81,
        "difference": -0.1,
        "difference_low": -0.12,
        "difference_high": -0.08,
        "p_value": 0.004,
        "seconds_per_epoch": 0.012,
        "peak_mb": 1.0,
        "contender_status": "fail",
        "gate_status": "fail",
        "environment_differs": True,
    }
    assert old["verdicts"][0] == {"memory": "pass", "metric": "fail", "time": "pass"}
    assert old["environment"][0] == {"threads": 2}
    # a gate run of today lands in the same table, after the old one
    newest = load_history(stored, "docks").tail(2)
    records = [GateRecord(**row) for row in newest.drop(columns="gate_id").to_dict("records")]
    append(any_store, records)
    grown = load_history(any_store, "docks")
    assert grown["gate_id"].nunique() == 2
    assert grown["contender"].tolist() == ["attention", "attention", "features_only"]
    assert grown["peak_mb"].tolist() == [1.0, 1.5, 1.5]

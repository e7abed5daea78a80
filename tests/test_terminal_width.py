"""`show` and the demo report at 80 columns: no contender name or verdict is cut, no line is
wider than the screen; piped output is 100 columns wide."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from harness.analysis.verdict import BETTER, INCONCLUSIVE, NO_DIFFERENCE, WORSE
from harness.api import analyse_store
from harness.commands.inspect import show
from harness.data import load_graph
from harness.execution.runs import record_of
from harness.planning import expand, load_suite
from harness.report.documents.suite import suite_document
from harness.report.documents.summary import summary_documents
from harness.report.formats import terminal
from harness.results import NodePredictions, RunResult
from harness.storage import store
from harness.storage.suite_runs import suite_runs

DEMO = Path(__file__).parent.parent / "suites" / "demo.toml"
# each model kind's share of correct test nodes: close enough for inconclusive verdicts
LEVELS = {"gat": 0.74, "gatv2": 0.73, "gcn": 0.715, "sage": 0.72, "mlp": 0.44}
VERDICTS = (BETTER, WORSE, NO_DIFFERENCE, INCONCLUSIVE)


@pytest.fixture(scope="module")
def demo_store(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The demo suite's runs under their real keys, crafted without training: seeded correct
    shares per model kind, test-node predictions for the breakdown, attention diagnostics."""
    suite = load_suite(DEMO)
    labels = load_graph(suite.data).y.numpy()
    classes = int(labels.max()) + 1
    rng = np.random.default_rng(0)
    nodes = np.sort(rng.choice(len(labels), 300, replace=False))
    path = tmp_path_factory.mktemp("demo") / "runs.db"
    for spec in expand(suite):
        right = rng.random(len(nodes)) < LEVELS[spec.model]
        predicted = np.where(right, labels[nodes], (labels[nodes] + 1) % classes)
        probabilities = np.full((len(nodes), classes), 0.1 / (classes - 1), dtype=np.float32)
        probabilities[np.arange(len(nodes)), predicted] = 0.9
        value = float(right.mean())
        measures = {"entropy_ratio": 0.95, "self_share": 0.13, "uniform_self_share": 0.128}
        measures |= {"same_label_share": 0.6, "neighbour_homophily": 0.59}
        attention = spec.model in ("gat", "gatv2")
        result = RunResult(
            val_metric=value,
            test_metric=value,
            test_scores=dict.fromkeys(("accuracy", "macro_f1", "roc_auc"), value),
            epochs=50,
            best_epoch=40,
            seconds=1.0,
            seconds_per_epoch=0.02,
            params=1000,
            peak_mb=5.0,
            curve=[value],
            extras={"attention": {"mean": measures}} if attention else {},
            predictions=NodePredictions(nodes, probabilities, len(labels)),
        )
        store.save_run(path, record_of(spec, result))
    return path


def assert_nothing_cut(text: str, names: list[str]) -> None:
    """Every line fits 80 columns, nothing ends in an ellipsis, and each name and verdict
    shows whole on some line (wrapping at spaces is allowed for verdicts of several words)."""
    lines = text.splitlines()
    assert all(len(line) <= 80 for line in lines), max(lines, key=len)
    assert "…" not in text
    words = {word for line in lines for word in line.split()}
    for name in names:
        assert name in words, name
    for verdict in VERDICTS:
        if verdict in " ".join(text.split()):
            assert all(part in words for part in verdict.split())


def test_show_fits_80_columns_without_cutting_names(demo_store: Path) -> None:
    outcome = show(suite_runs(demo_store, DEMO), analysed=True)
    documents = summary_documents(outcome.summary, outcome.ablation, outcome.reports)
    text = "".join(terminal.render(document, 80) for document in documents)
    assert text.startswith("Verdict: ")  # the headline comes first
    assert_nothing_cut(text, list(load_suite(DEMO).contenders))


def test_demo_report_fits_80_columns_without_cutting_names(demo_store: Path) -> None:
    report = analyse_store(demo_store, str(DEMO))
    assert report.breakdown is not None and report.breakdown.attention is not None
    text = terminal.render(suite_document(report), 80)
    assert text.startswith("Verdict: ")
    assert "Per-node breakdown" in text and "Contenders by node group" in text
    assert_nothing_cut(text, list(load_suite(DEMO).contenders))


def test_piped_output_is_100_columns_wide(demo_store: Path) -> None:
    report = analyse_store(demo_store, str(DEMO))
    text = terminal.render(suite_document(report))
    assert max(len(line) for line in text.splitlines()) <= terminal.PIPED_WIDTH == 100


def test_an_interrupted_line_keeps_a_long_store_path_whole(monkeypatch, capsys):
    """Piped output is 100 columns wide, and a store deep in a folder tree is longer: the
    path must stay whole (not wrapped at the column) so that it can be copied or grepped."""
    from rich.console import Console

    from harness import screen
    from harness.execution.executed import Executed

    monkeypatch.setattr(screen, "errors", Console(stderr=True, width=60))
    store_path = "/srv/" + "/".join(["nightly-checks"] * 6) + "/interrupted.db"
    screen.interrupted(Executed(planned=4, skipped=0, finished=1, interrupted=True), store_path)
    said = capsys.readouterr().err
    assert said == (
        f"interrupted: 1 runs finished and stored in {store_path}; run the same command again "
        "to continue\n"
    )

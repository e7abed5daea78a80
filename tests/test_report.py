"""Report files, escaping of hostile names, the `report` command and the verdict after `show`."""

from __future__ import annotations

import base64
import dataclasses
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from harness.api import analyse, analyse_store
from harness.cli import main
from harness.execution.runs import record_of
from harness.planning import expand, load_suite
from harness.report.documents.homophily_plots import homophily_plot
from harness.report.documents.suite import suite_document
from harness.report.documents.suite_tables import frames
from harness.report.formats import html, latex, markdown
from harness.report.formats.folder import write_plots, write_report
from harness.results import RunResult
from harness.storage import store

HOSTILE_SUITE = """\
# Fictional parcel lockers of an invented courier network; names chosen to break renderers
# (suite files allow plain names only, so the hostile ones enter as an older store held them).
name = "lockers"
seeds = 4
metric = "accuracy"

[data]
source = "synthetic"
nodes = 60
classes = 2
graph_seed = 1

[contenders.attention]
model = "gat"
heads = 2
hidden = 4

[contenders.convolution]
model = "gcn"
hidden = 8

[contenders.plain]
model = "mlp"
hidden = 8

[analysis]
minimum_gain = 2.0
bootstrap_resamples = 200
"""
SCRIPT = "<script>alert(1)</script>"
HOSTILE_NAME = "50%_&_$x$"
HOSTILE_CONTENDERS = {"attention": SCRIPT, "convolution": "conv_{a}^b\\c", "plain": "plain|mlp"}


def stored_suite(
    tmp_path: Path, attention_extras: bool = False, suite_name: str | None = HOSTILE_NAME
) -> tuple[str, Path]:
    """Crafted stored runs under the suite's real keys (no training), with hostile contender
    names, and stored under `suite_name`; gives the suite argument (that name, or the suite
    file when `suite_name` is None) and the store."""
    suite_path = tmp_path / "hostile.toml"
    suite_path.write_text(HOSTILE_SUITE, encoding="utf-8")
    store_path = tmp_path / "runs.db"
    level = {"gat": 0.80, "gcn": 0.74, "mlp": 0.60}
    rng = np.random.default_rng(0)
    for spec in expand(load_suite(suite_path)):
        renamed = {"contender": HOSTILE_CONTENDERS[spec.contender]}
        spec = dataclasses.replace(spec, suite=suite_name or spec.suite, **renamed)
        value = level[spec.model] + 0.01 * spec.seed + rng.normal(0, 0.002)
        extras = {}
        if attention_extras and spec.model == "gat":
            measures = {"entropy_ratio": 0.9, "self_share": 0.2, "uniform_self_share": 0.15}
            measures |= {"same_label_share": 0.8, "neighbour_homophily": 0.6}
            extras = {"attention": {"mean": measures}}
        result = RunResult(
            val_metric=value,
            test_metric=value,
            test_scores=dict.fromkeys(("accuracy", "macro_f1", "roc_auc"), value),
            epochs=10,
            best_epoch=8,
            seconds=0.5,
            seconds_per_epoch={"gat": 0.05, "gcn": 0.01, "mlp": 0.005}[spec.model],
            params={"gat": 300, "gcn": 200, "mlp": 150}[spec.model],
            peak_mb={"gat": 2.0, "gcn": 1.0, "mlp": 0.5}[spec.model],
            curve=[value],
            extras=extras,
        )
        store.save_run(store_path, record_of(spec, result))
    return suite_name or str(suite_path), store_path


def test_report_command_writes_every_format_and_prints_the_verdict(tmp_path: Path, capsys):
    suite_path, store_path = stored_suite(tmp_path, attention_extras=True)
    out = tmp_path / "report"
    code = main(["report", suite_path, "--out", str(out), "--store", str(store_path)])
    printed = capsys.readouterr().out
    assert code == 0
    assert "Verdict:" in printed and "beats the best baseline" in printed
    assert "Cost trade-off" in printed and "12 files written to" in printed
    names = {p.relative_to(out).as_posix() for p in out.rglob("*") if p.is_file()}
    assert {"report.md", "report.html", "report.tex"} <= names
    assert {"csv/contenders.csv", "csv/comparisons.csv", "csv/cost.csv", "csv/attention.csv"} <= (
        names
    )
    assert {"plots/contenders.png", "plots/differences.png", "plots/cost.png"} <= names
    assert {"plots/attention.png", "plots/homophily.png"} <= names
    assert "plots/ablation.png" not in names  # no varied axis: skipped, not drawn empty
    for png in out.glob("plots/*.png"):
        assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    comparisons = pd.read_csv(out / "csv" / "comparisons.csv")
    assert len(comparisons) == 2  # one attention contender against two baselines
    assert set(comparisons["verdict"]) == {"better"}
    page = (out / "report.html").read_text(encoding="utf-8")
    images = re.findall(r'src="data:image/png;base64,([A-Za-z0-9+/=]+)"', page)
    assert len(images) == 5
    assert base64.b64decode(images[0])[:4] == b"\x89PNG"
    assert "http://" not in page and "https://" not in page  # self-contained


def test_hostile_names_are_escaped_in_html_latex_and_markdown(tmp_path: Path):
    suite_path, store_path = stored_suite(tmp_path)
    document = suite_document(analyse_store(store_path, suite_path))
    page = html.render(document)
    assert SCRIPT not in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in page
    assert "50%_&amp;_$x$" in page
    tex = latex.render(document)
    assert r"50\%\_\&\_\$x\$" in tex
    assert r"conv\_\{a\}\textasciicircum{}b\textbackslash{}c" in tex
    assert r"\textless{}script\textgreater{}" in tex and "<script>" not in tex
    assert r"\toprule" in tex and r"\midrule" in tex and r"\bottomrule" in tex
    text = markdown.render(document)
    assert "<script>" not in text and "&lt;script&gt;" in text
    assert r"plain\|mlp" in text and r"50%\_&amp;\_\$x\$" in text
    # every Markdown table row has as many cells as its header
    for block in re.findall(r"(?:^\|.*\|$\n?)+", text, flags=re.M):
        widths = {len(re.split(r"(?<!\\)\|", line)) for line in block.strip().splitlines()}
        assert len(widths) == 1


def test_show_prints_the_verdict_after_the_table(tmp_path: Path, capsys):
    _, store_path = stored_suite(tmp_path)
    assert main(["show", "50%_&_$x$", "--store", str(store_path)]) == 0
    printed = capsys.readouterr().out
    assert "Verdict:" in printed and "beats the best baseline" in printed


@pytest.mark.parametrize(
    ("arguments", "message"),
    [
        (["report", "nothing_stored", "--out", "OUT"], "no stored runs for suite 'nothing_stored'"),
        (["report", "50%_&_$x$", "--out", "FILE"], "--out is a file"),
        (["report", "50%_&_$x$", "--out", "FILE/inside"], "cannot write the report"),
    ],
)
def test_report_errors_are_one_line_with_status_2(tmp_path: Path, capsys, arguments, message):
    _, store_path = stored_suite(tmp_path)
    (tmp_path / "FILE").write_text("not a folder")
    arguments = [str(tmp_path / a) if a.startswith(("OUT", "FILE")) else a for a in arguments]
    assert main([*arguments, "--store", str(store_path)]) == 2
    error = capsys.readouterr().err.strip()
    assert message in error and "\n" not in error


def test_analyse_refuses_runs_of_two_suites():
    rows = [
        {"suite": name, "contender": "c", "model": "gcn", "options": {}, "point": {}, "seed": 0}
        | {"metric": "accuracy", "test_metric": 0.5, "extras": {}}
        for name in ("one", "two")
    ]
    from harness.errors import InputError

    with pytest.raises(InputError, match="runs of 2 suites"):
        analyse(pd.DataFrame(rows))


def test_stored_homophily_map_is_drawn_and_tabled(tmp_path: Path):
    """Map runs (stored under the map's suite name) and the data profile enter the report."""
    from harness.data import load_graph
    from harness.data.profile import profile_graph
    from harness.planning import map_suite_name
    from harness.storage.profiles import save_profile

    suite_path, store_path = stored_suite(tmp_path, suite_name=None)
    suite_path = Path(suite_path)
    text = suite_path.read_text() + "\n[homophily_map]\nlevels = [0.2, 0.8]\nseeds = 2\n"
    suite_path.write_text(text, encoding="utf-8")
    suite = load_suite(suite_path)
    save_profile(store_path, suite.name, suite.data, profile_graph(load_graph(suite.data)))
    for level in (0.2, 0.8):
        for contender, base in (("plain|mlp", 0.6), ("conv_{a}^b\\c", 0.5 + 0.3 * level)):
            for seed in range(2):
                record = store.load_runs(store_path, [suite.name]).iloc[0].to_dict()
                value = base + 0.01 * seed
                record |= {"suite": map_suite_name(suite), "contender": contender}
                record |= {"key": f"{contender}{level}{seed}", "point": {"edge_homophily": level}}
                record |= {"seed": seed, "test_metric": value}
                record.pop("version"), record.pop("finished_at")
                store.save_run(store_path, record)
    report = analyse_store(store_path, suite_path)
    assert report.homophily_map is not None
    table = report.homophily_map.table.set_index(["level", "contender"])
    assert table.loc[(0.8, "conv_{a}^b\\c"), "mean"] == pytest.approx(0.745)
    assert table.loc[(0.2, "plain|mlp"), "seeds"] == 2
    figure = homophily_plot(report)
    assert [axes.get_title() for axes in figure.axes][0] == "contenders across homophily"
    assert "homophily_map" in frames(report)
    page = markdown.render(suite_document(report))
    assert "## Homophily map" in page and "edge homophily is" in page


@pytest.fixture(scope="module")
def drawn_report(tmp_path_factory: pytest.TempPathFactory):
    """The hostile suite's report document with its plots, drawn once for the writers."""
    suite_path, store_path = stored_suite(tmp_path_factory.mktemp("drawn"), True)
    return suite_document(analyse_store(store_path, suite_path), drawn=True)


@pytest.mark.parametrize("writer", ["plots", "report"])
def test_every_writer_keeps_the_contract(tmp_path: Path, drawn_report, writer: str):
    """Each writer writes non-empty files inside the folder; markup formats escape names."""
    write = write_plots if writer == "plots" else write_report
    written = write(drawn_report, tmp_path)
    assert written
    for path in written:
        assert path.is_file() and path.stat().st_size > 0
        assert tmp_path in path.parents
        if path.suffix in (".md", ".html", ".tex"):
            assert SCRIPT not in path.read_text(encoding="utf-8")

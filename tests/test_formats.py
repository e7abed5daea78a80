"""Every report format renders the same Document: one contract, parametrised over the format
registry (harness.report.formats.FORMATS); renderers compute no statistics."""

from __future__ import annotations

import ast
import json
import xml.etree.ElementTree as ElementTree
from pathlib import Path

import pandas as pd
import pytest

import harness.report.formats as formats_package
from harness.report.documents.document import Document, Items, Plot, Text, table
from harness.report.formats import FORMATS

# a one-pixel PNG: the smallest valid image for the plot a document may carry
PIXEL = bytes.fromhex(
    "89504e470d0a1a0a0000000d4948445200000001000000010806000000"
    "1f15c4890000000d49444154789c6360000002000154a24f5d0000000049454e44ae426082"
)
SCRIPT = "<script>alert(1)</script>"


@pytest.fixture(scope="module")
def document() -> Document:
    """A fictional ferry timetable report: every kind of block, a hostile name, checks."""
    rows = [["harbour_ferry", "0.812", "better"], [SCRIPT, "0.640", "inconclusive"]]
    part = table(
        "crossings",
        "Crossings kept on time",
        ["contender", "share", "verdict"],
        rows,
        "Share of crossings within five minutes.",
        marks=["better", "inconclusive"],
    )
    checks = pd.DataFrame(
        [
            {
                "classname": "ferries.harbour_ferry",
                "name": "metric",
                "time": 1.5,
                "status": "pass",
                "message": "within tolerance",
            },
            {
                "classname": "ferries.night_boat",
                "name": "time",
                "time": 0.0,
                "status": "fail",
                "message": "seconds per epoch x2.00 above limit",
            },
        ]
    )
    return Document(
        title="Ferry report",
        headline="harbour_ferry beats the night boat",
        notices=("incomplete: 3 of 4 runs stored",),
        lead="Metric: test accuracy; 4 seeds.",
        blocks=(
            part,
            Items("Verdicts", ("harbour_ferry vs night_boat: better",)),
            Text("Figures are estimates."),
        ),
        plots=(Plot("crossings", "Crossings per contender", PIXEL),),
        frames={
            "crossings": pd.DataFrame({"contender": ["harbour_ferry"], "share": [0.8125]}),
            "checks": checks,
        },
        data=[{"contender": "harbour_ferry", "share": 0.8125}],
        properties=(("metric", "accuracy"),),
        name="gate ferries",
        made_at=1.8e9,
    )


def readable(name: str, text: str) -> str:
    """What a reader of the format sees, as plain text (escapes and markup undone)."""
    if name == "junit":
        root = ElementTree.fromstring(text.encode("utf-8"))
        return " ".join(
            [c.get("classname") + " " + c.get("name") for c in root.iter("testcase")]
            + [element.text or "" for element in root.iter()]
            + [element.get("message", "") for element in root.iter()]
        )
    if name == "json":
        return json.dumps(json.loads(text))
    return text.replace("\\_", "_")


# what each kind of format must carry: people read the blocks; machines the frames or data
SAID = {
    "terminal": (
        "harbour_ferry beats",
        "Crossings kept on time",
        "0.812",
        "inconclusive",
        "Share of crossings",
        "harbour_ferry vs night_boat: better",
    ),
    "markdown": (
        "Ferry report",
        "harbour_ferry beats",
        "Crossings kept on time",
        "0.812",
        "inconclusive",
        "harbour_ferry vs night_boat: better",
        "plots/crossings.png",
    ),
    "html": (
        "Ferry report",
        "harbour_ferry beats",
        "Crossings kept on time",
        "0.812",
        "inconclusive",
        "harbour_ferry vs night_boat: better",
        "data:image/png;base64,",
    ),
    "latex": ("Ferry report", "harbour", "Crossings kept on time", "0.812", "inconclusive"),
    "csv": ("harbour_ferry", "0.8125", "seconds per epoch x2.00 above limit"),
    "json": ("harbour_ferry", "0.8125"),
    "junit": ("ferries.night_boat time", "seconds per epoch x2.00 above limit"),
}


def test_every_registered_format_has_a_contract() -> None:
    assert set(SAID) == set(FORMATS)


@pytest.mark.parametrize("name", sorted(FORMATS))
def test_each_format_renders_the_document(document: Document, name: str, tmp_path: Path) -> None:
    entry = FORMATS[name]
    text = entry.render(document)
    assert isinstance(text, str) and text.strip()
    seen = readable(name, text)
    for phrase in SAID[name]:
        assert phrase in seen, phrase
    if name in ("markdown", "html", "latex"):
        assert SCRIPT not in text  # names are escaped for markup
    written = entry.write(document, tmp_path)
    assert written and all(path.is_file() and tmp_path in path.parents for path in written)


def test_junit_counts_the_checks(document: Document) -> None:
    root = ElementTree.fromstring(FORMATS["junit"].render(document).encode("utf-8"))
    assert root.get("tests") == "2" and root.get("failures") == "1"
    assert root.find("testsuite").get("name") == "heedful.gate.ferries"


def test_options_name_one_format_each() -> None:
    options = [entry.option for entry in FORMATS.values()]
    assert len(options) == len(set(options))
    assert formats_package.options(formats_package.SHOW_FORMATS) == ("table", "json", "csv", "md")


def test_renderers_compute_no_statistics() -> None:
    """Format modules import no analysis and no numerical library: they only lay text out."""
    folder = Path(formats_package.__file__).parent
    forbidden = ("harness.analysis", "numpy", "scipy", "statistics", "math")
    for path in folder.glob("*.py"):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            names = []
            if isinstance(node, ast.Import):
                names = [alias.name for alias in node.names]
            elif isinstance(node, ast.ImportFrom):
                names = [node.module or ""]
            bad = [n for n in names if n == "math" or n.startswith(forbidden[:-1])]
            assert not bad, f"{path.name} imports {bad}"


def test_report_tests_for_missing_values_only_with_formatting_missing() -> None:
    """One test of a missing figure (harness.formatting.missing): no NaN checks of their own."""
    folder = Path(formats_package.__file__).parent.parent
    own = ("isnan(", "isna(", "v != v", "value != value")
    for path in folder.rglob("*.py"):
        text = path.read_text(encoding="utf-8")
        assert not [word for word in own if word in text], path.name

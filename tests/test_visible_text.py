"""Control and bidirectional characters are shown escaped in every format (issue 27, item 11):
a class label "\\x1b[2J\\x1b]0;pwned" cleared the screen in `describe`, and right-to-left
overrides and zero-width characters reached every format unchanged. One function,
harness.formatting.visible, does it for the terminal, Markdown, HTML, LaTeX and CSV."""

from __future__ import annotations

import io
import sys
import unicodedata

import pytest

from harness import screen
from harness.cli import main
from harness.formatting import HIDDEN, visible
from harness.report.documents.records import records_document
from harness.report.formats import FORMATS, csv, html, latex, markdown
from harness.storage import store

HOSTILE = "\x1b[2J\x1b]0;pwned"
REORDERED = "ab\u202edc\u200bx"


def test_every_control_format_and_separator_character_is_hidden():
    """Unicode's General_Category Cc, Cf, Zl and Zp (Python's unicodedata), on every plane."""
    hidden = {"Cc", "Cf", "Zl", "Zp"}
    missed = [
        hex(code)
        for code in range(sys.maxunicode + 1)
        if unicodedata.category(chr(code)) in hidden and not HIDDEN.match(chr(code))
    ]
    assert missed == []
    assert visible(HOSTILE) == "\\x1b[2J\\x1b]0;pwned"
    assert visible(REORDERED) == "ab\\u202edc\\u200bx"
    assert visible("café 中 ✓") == "café 中 ✓"  # printable text is left alone


@pytest.mark.parametrize(
    "escape",
    [markdown.escape, html.escape, latex.escape],
    ids=["markdown", "html", "latex"],
)
def test_each_text_format_escapes_through_visible(escape):
    for text in (HOSTILE, REORDERED):
        written = escape(text)
        assert not HIDDEN.search(written)
        assert "x1b" in written or "u202e" in written


def hidden_in(text: str) -> list[str]:
    """Hidden characters of a written text, apart from its own line ends."""
    return HIDDEN.findall(text.replace("\n", ""))


def test_csv_cells_and_run_records_show_hidden_characters(finished_store):
    assert csv._cell(HOSTILE) == visible(HOSTILE)
    assert csv._cell({"a": 1}) == '{"a": 1}' and csv._cell(0.5) == 0.5
    runs = store.load_runs(finished_store[1])
    runs["contender"] = REORDERED  # as a hand-edited store could hold it
    written = FORMATS["csv"].render(records_document(runs))
    assert hidden_in(written) == [] and visible(REORDERED) in written


def test_the_terminal_shows_the_escapes_and_keeps_its_styles():
    buffer = io.StringIO()
    console = screen.VisibleConsole(file=buffer, force_terminal=True, width=120, highlight=False)
    console.print(f"[bold]label[/bold] {HOSTILE} {REORDERED}")
    written = buffer.getvalue()
    assert "\\x1b[2J" in written and "\\u202e" in written and "\u202e" not in written
    assert "\x1b[1m" in written  # rich's own bold style still reaches the terminal
    assert "\x1b[2J" not in written and "\x1b]0;" not in written


def test_describe_shows_a_hostile_class_label_escaped(tmp_path, capsys):
    nodes = "id,label,f_size\n" + "".join(
        f'n{i},"{(HOSTILE, REORDERED)[i % 2]}",{i % 3}\n' for i in range(12)
    )
    edges = "source,target\n" + "".join(f"n{i},n{(i + 1) % 12}\n" for i in range(12))
    (tmp_path / "nodes.csv").write_text(nodes)
    (tmp_path / "edges.csv").write_text(edges)
    suite = tmp_path / "suite.toml"
    suite.write_text(
        'name = "hostile_labels"\n[data]\nsource = "tables"\nnodes = "nodes.csv"\n'
        'edges = "edges.csv"\n[contenders.features_only]\nmodel = "mlp"\n'
    )
    assert main(["describe", str(suite)]) == 0
    out = capsys.readouterr().out
    assert "\\x1b[2J\\x1b]0;pwned" in out and "ab\\u202edc\\u200bx" in out
    assert hidden_in(out) == []

"""The README and the documentation pages: short README, the CI command it names, links that
resolve, every page in the site's navigation, and example suites that validate."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from harness.planning import load_suite

ROOT = Path(__file__).resolve().parents[1]
README = (ROOT / "README.md").read_text(encoding="utf-8")
DOCS = ROOT / "docs"
GENERATED_PAGES = {"reference.md", "command-options.md"}  # written by docs/hooks at build time
LINK = re.compile(r"\]\(([^)#\s]+)(?:#[^)]*)?\)")


def code_blocks(text: str, language: str) -> list[str]:
    return re.findall(rf"```{language}\n(.*?)```", text, flags=re.DOTALL)


def test_readme_fits_in_twelve_thousand_characters():
    assert len(README) <= 12_000


def test_ci_runs_exactly_the_readmes_test_command():
    quick_start = README.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    commands = code_blocks(quick_start, "bash")
    assert len(commands) == 2
    test_command = commands[1].strip()
    ci_lines = (ROOT / ".ci" / "run").read_text(encoding="utf-8").splitlines()
    assert test_command in ci_lines


def test_ci_builds_the_documentation_strictly():
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert "mkdocs build --strict" in ci and "'.[docs]'" in ci


@pytest.mark.parametrize(
    "page",
    [ROOT / "README.md", ROOT / "DEVELOPERS.md", ROOT / "benchmarks" / "README.md"]
    + sorted(DOCS.glob("*.md")),
    ids=str,
)
def test_relative_links_resolve(page: Path):
    text = page.read_text(encoding="utf-8")
    broken = []
    for target in LINK.findall(text):
        if "://" in target:
            continue
        if page.parent == DOCS and target in GENERATED_PAGES:
            continue
        if not (page.parent / target).exists():
            broken.append(target)
    assert broken == []


def test_every_page_is_in_the_sites_navigation():
    navigation = (ROOT / "mkdocs.yml").read_text(encoding="utf-8")
    listed = set(re.findall(r":\s+([\w-]+\.md)\s*$", navigation, flags=re.MULTILINE))
    pages = {page.name for page in DOCS.glob("*.md")} | GENERATED_PAGES
    assert listed == pages


def test_the_readmes_minimal_suite_validates(tmp_path: Path):
    """The suite a newcomer copies first must be accepted as written."""
    (minimal,) = [block for block in code_blocks(README, "toml") if 'source = "tables"' in block]
    (tmp_path / "nodes.csv").write_text("id,label,f1\na,x,0.1\nb,y,0.2\nc,x,0.3\n")
    (tmp_path / "edges.csv").write_text("source,target\na,b\nb,c\n")
    path = tmp_path / "my_graph.toml"
    path.write_text(minimal, encoding="utf-8")
    suite = load_suite(path)
    assert list(suite.contenders) == ["attention", "convolution", "features_only"]
    assert suite.metric == "accuracy" and suite.training.patience == 50


@pytest.mark.parametrize("page", sorted(DOCS.glob("*.md")), ids=lambda p: p.name)
def test_no_page_names_the_old_tuning_option_as_current(page: Path):
    text = page.read_text(encoding="utf-8")
    for line in text.splitlines():
        if "--storage" in line:
            assert "old name" in line or "called" in line or "formerly" in line, line


def test_the_command_pages_table_names_exactly_each_commands_options():
    """docs/commands.md's table against the parser: no option missing, none invented."""
    import argparse

    from harness.cli import parser

    top = parser()
    action = next(a for a in top._actions if isinstance(a, argparse._SubParsersAction))
    page = (DOCS / "commands.md").read_text(encoding="utf-8")
    rows = re.findall(r"^\| `heedful (\w+)([^`]*)` \|", page, flags=re.MULTILINE)
    assert {name for name, _ in rows} == set(action.choices)
    for name, usage in rows:
        documented = set(re.findall(r"--[\w-]+", usage))
        offered = {
            option
            for argument in action.choices[name]._actions
            if argument.help != argparse.SUPPRESS
            for option in argument.option_strings
            if option.startswith("--") and option != "--help"
        }
        assert documented == offered, name

"""No stage branches on a task or model-kind name: they read the registries' declarations.

Walks the syntax tree of every harness module outside the two registries (harness/schema/tasks/,
harness/schema/model_kinds.py) and the options module whose `model` literals name the kinds
(harness/schema/contenders.py), and fails on a comparison against a task or model-kind name:
`==`/`!=`/`is`, `in`/`not in` a literal collection, or a `match` case on such a name.
"""

from __future__ import annotations

import ast
from pathlib import Path

import harness
from harness.schema.model_kinds import MODEL_KINDS
from harness.schema.tasks import TASKS

PACKAGE = Path(harness.__file__).parent
REGISTRIES = (
    PACKAGE / "schema" / "tasks",
    PACKAGE / "schema" / "model_kinds.py",
    PACKAGE / "schema" / "contenders.py",
)
NAMES = frozenset(TASKS) | frozenset(MODEL_KINDS)


def literal_names(node: ast.AST) -> set[str]:
    """Registered names a literal spells: a string, or strings in a tuple, list or set."""
    if isinstance(node, ast.Constant) and isinstance(node.value, str):
        return {node.value} & NAMES
    if isinstance(node, ast.Tuple | ast.List | ast.Set):
        return set().union(*(literal_names(element) for element in node.elts))
    return set()


def branches(source: str) -> list[tuple[int, str]]:
    """(line, name) of every comparison or match case against a registered name."""
    found = []
    for node in ast.walk(ast.parse(source)):
        if isinstance(node, ast.Compare):
            for operand in (node.left, *node.comparators):
                found += [(node.lineno, name) for name in sorted(literal_names(operand))]
        elif isinstance(node, ast.MatchValue):
            found += [(node.lineno, name) for name in sorted(literal_names(node.value))]
    return found


def outside_registries() -> list[Path]:
    return [
        path
        for path in sorted(PACKAGE.rglob("*.py"))
        if not any(path == place or place in path.parents for place in REGISTRIES)
    ]


def test_no_module_compares_a_task_or_model_kind_name() -> None:
    offending = [
        f"{path.relative_to(PACKAGE.parent)}:{line}: compares against '{name}'"
        for path in outside_registries()
        for line, name in branches(path.read_text(encoding="utf-8"))
    ]
    assert offending == []


def test_the_walker_finds_every_form_of_branch() -> None:
    """A probe with each form the rule forbids, and forms it allows (a name as a value)."""
    probe = (
        'if spec.task == "link_prediction": pass\n'
        'if "gat" != options.model: pass\n'
        'if kind in ("gcn", "sage"): pass\n'
        'if model not in {"mlp"}: pass\n'
        'match task:\n    case "node_classification": pass\n'
        'allowed = ["gatv2"]\n'  # a value, not a comparison
        'if name == "accuracy": pass\n'  # not a task or kind name
    )
    assert branches(probe) == [
        (1, "link_prediction"),
        (2, "gat"),
        (3, "gcn"),
        (3, "sage"),
        (4, "mlp"),
        (6, "node_classification"),
    ]

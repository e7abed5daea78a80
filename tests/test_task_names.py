"""No stage branches on a task, model-kind or data-source name: they read declarations.

Walks the syntax tree of every harness module outside the registries (harness/schema/tasks/,
harness/schema/model_kinds.py), the options module whose `model` literals name the kinds
(harness/schema/contenders.py) and the data sections (harness/schema/data.py), and fails on a
comparison against a registered name: `==`/`!=`/`is`, `in`/`not in` a literal collection, or a
`match` case on such a name. Nor may a module ask whether options have a kind's own option
(`getattr(options, "hop_radius", 1)`, `hasattr(options, "heads")`): every kind declares what
the stages ask of it (`layer_radius()`, `heads_per_layer()`, `merge_per_layer()`).
"""

from __future__ import annotations

import ast
from pathlib import Path
from typing import get_args

import harness
from harness.schema.contenders import ContenderBase
from harness.schema.data import DataSection
from harness.schema.model_kinds import MODEL_KINDS
from harness.schema.tasks import TASKS

PACKAGE = Path(harness.__file__).parent
REGISTRIES = (
    PACKAGE / "schema" / "tasks",
    PACKAGE / "schema" / "model_kinds.py",
    PACKAGE / "schema" / "contenders.py",
    PACKAGE / "schema" / "data.py",
)
SOURCES = frozenset(
    name
    for section in get_args(get_args(DataSection)[0])
    for name in get_args(section.model_fields["source"].annotation)
)
NAMES = frozenset(TASKS) | frozenset(MODEL_KINDS) | SOURCES
# options some kinds have and others not
OWN_OPTIONS = (
    frozenset(name for kind in MODEL_KINDS.values() for name in kind.options.model_fields)
    - frozenset(ContenderBase.model_fields)
    - {"model"}
)


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
        elif isinstance(node, ast.Call) and probes_an_option(node):
            found.append((node.lineno, node.args[1].value))
    return found


def probes_an_option(call: ast.Call) -> bool:
    """`getattr(x, "<a kind's own option>", default)` or `hasattr(x, "<...>")`."""
    if not isinstance(call.func, ast.Name) or len(call.args) < 2:
        return False
    probing = call.func.id == "hasattr" or (call.func.id == "getattr" and len(call.args) == 3)
    name = call.args[1]
    return probing and isinstance(name, ast.Constant) and name.value in OWN_OPTIONS


def outside_registries() -> list[Path]:
    return [
        path
        for path in sorted(PACKAGE.rglob("*.py"))
        if not any(path == place or place in path.parents for place in REGISTRIES)
    ]


def test_no_module_branches_on_a_registered_name() -> None:
    offending = [
        f"{path.relative_to(PACKAGE.parent)}:{line}: branches on '{name}'"
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
        'if data.source == "synthetic": pass\n'
        'radius = getattr(options, "hop_radius", 1)\n'
        'if hasattr(options, "heads"): pass\n'
        'radius = getattr(options, "layers")\n'  # every kind has it: no default to fall back on
    )
    assert sorted(branches(probe)) == [
        (1, "link_prediction"),
        (2, "gat"),
        (3, "gcn"),
        (3, "sage"),
        (4, "mlp"),
        (6, "node_classification"),
        (9, "synthetic"),
        (10, "hop_radius"),
        (11, "heads"),
    ]

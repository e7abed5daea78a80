"""The package's imports follow the data flow: no cycles, nothing reaches back up the flow.

Every import is counted, wherever it is written: at module level, inside functions and behind
`TYPE_CHECKING`.
"""

from __future__ import annotations

import ast
from collections.abc import Iterable
from pathlib import Path

import harness

PACKAGE = Path(harness.__file__).parent

# earliest first; a module may import only modules of its own stage or an earlier one
STAGES = (
    ("harness", "harness.errors", "harness.digest", "harness.output_files", "harness.results"),
    ("harness.schema",),
    ("harness.formatting",),  # metric labels come from the task registry
    ("harness.planning",),
    ("harness.data",),
    ("harness.models",),
    ("harness.training",),
    ("harness.storage",),
    ("harness.execution",),
    ("harness.tuning",),
    ("harness.analysis",),
    ("harness.gate",),
    ("harness.report",),  # report documents
    ("harness.report.formats",),  # render any document
    ("harness.commands", "harness.api"),
    ("harness.screen",),
    ("harness.arguments", "harness.cli"),
)


def module_name(path: Path) -> str:
    parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def stage(module: str) -> int | None:
    """The stage of a module: its longest matching prefix in STAGES; None when in no stage.
    The package itself is a prefix of nothing, so a new subpackage must be given its stage."""
    best, rank = "", None
    for index, prefixes in enumerate(STAGES):
        for prefix in prefixes:
            inside = prefix != PACKAGE.name and module.startswith(prefix + ".")
            if (module == prefix or inside) and len(prefix) > len(best):
                best, rank = prefix, index
    return rank


def unstaged(modules: Iterable[str]) -> list[str]:
    """One line per module in no stage."""
    return [
        f"{name}: in no stage; add its subpackage to STAGES"
        for name in sorted(modules)
        if stage(name) is None
    ]


def back_imports(graph: dict[str, set[str]]) -> list[str]:
    """One line per import of a later stage (modules in no stage are `unstaged`'s)."""
    return sorted(
        f"{name} (stage {stage(name)}) imports {target} (stage {stage(target)})"
        for name, targets in graph.items()
        for target in targets
        if None not in (stage(name), stage(target)) and stage(target) > stage(name)
    )


def import_cycles(graph: dict[str, set[str]]) -> list[str]:
    """Each import cycle once, as `a -> b -> a`."""
    cycles = []
    state: dict[str, int] = {}  # 1: on the current path, 2: done

    def visit(name: str, path: list[str]) -> None:
        state[name] = 1
        for target in sorted(graph.get(name, ())):
            if state.get(target) == 1:
                cycles.append(" -> ".join(path[path.index(target) :] + [target]))
            elif target not in state:
                visit(target, path + [target])
        state[name] = 2

    for name in sorted(graph):
        if name not in state:
            visit(name, [name])
    return cycles


def imported_modules(path: Path, name: str) -> set[str]:
    """Harness modules a file imports anywhere in it (`from x import y` counts x.y if a module)."""
    found = set()
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            found |= {alias.name for alias in node.names}
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                anchor = package.split(".")[: len(package.split(".")) - node.level + 1]
                base = ".".join(anchor + ([base] if base else []))
            found.add(base)
            found |= {f"{base}.{alias.name}" for alias in node.names}
    return {module for module in found if module in MODULES and module != name}


MODULES = {module_name(path): path for path in sorted(PACKAGE.rglob("*.py"))}
GRAPH = {name: imported_modules(path, name) for name, path in MODULES.items()}


def test_every_module_has_a_stage() -> None:
    assert unstaged(MODULES) == []


def test_no_import_runs_back_up_the_flow() -> None:
    assert back_imports(GRAPH) == []


def test_no_import_cycles() -> None:
    assert import_cycles(GRAPH) == []


def test_the_checks_fail_on_a_bad_graph() -> None:
    """A synthetic module graph with one import back up the flow, one module in no stage and
    one cycle: each check names it."""
    graph = {
        "harness.schema.suite": {"harness.report.terminal"},  # schema reaching for the report
        "harness.report.terminal": set(),
        "harness.elsewhere": set(),
        "harness.data.a": {"harness.data.b"},
        "harness.data.b": {"harness.data.a"},
    }
    schema, report = stage("harness.schema"), stage("harness.report")
    assert back_imports(graph) == [
        f"harness.schema.suite (stage {schema}) imports harness.report.terminal (stage {report})"
    ]
    assert unstaged(graph) == ["harness.elsewhere: in no stage; add its subpackage to STAGES"]
    assert import_cycles(graph) == ["harness.data.a -> harness.data.b -> harness.data.a"]


def test_a_module_importing_up_the_flow_fails_the_check(tmp_path: Path) -> None:
    """A temporary training module that imports the command line inside a function: the
    stage check over the real graph with it added names that import."""
    source = tmp_path / "probe.py"
    source.write_text("def later():\n    from harness.cli import main\n", encoding="utf-8")
    graph = {**GRAPH, "harness.training.probe": imported_modules(source, "harness.training.probe")}
    training, command_line = stage("harness.training"), stage("harness.cli")
    assert back_imports(graph) == [
        f"harness.training.probe (stage {training}) imports harness.cli (stage {command_line})"
    ]


def test_the_walker_sees_hidden_imports(tmp_path: Path) -> None:
    """Function-level and TYPE_CHECKING imports count like module-level ones."""
    source = tmp_path / "probe.py"
    source.write_text(
        "from typing import TYPE_CHECKING\n"
        "if TYPE_CHECKING:\n    from harness.cli import main\n"
        "def later():\n    import harness.screen\n    from harness.commands import run\n",
        encoding="utf-8",
    )
    found = imported_modules(source, "harness.probe")
    assert found == {"harness.cli", "harness.screen", "harness.commands", "harness.commands.run"}

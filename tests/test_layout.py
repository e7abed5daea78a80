"""The package's imports follow the data flow: no cycles, nothing reaches back up the flow.

Every import is counted, wherever it is written: at module level, inside functions and behind
`TYPE_CHECKING`.
"""

from __future__ import annotations

import ast
from pathlib import Path

import harness

PACKAGE = Path(harness.__file__).parent

# earliest first; a module may import only modules of its own stage or an earlier one
STAGES = (
    ("harness", "harness.errors", "harness.digest", "harness.formatting"),
    ("harness.schema",),
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


def stage(module: str) -> int:
    """The stage of a module: its longest matching prefix in STAGES."""
    best, rank = "", -1
    for index, prefixes in enumerate(STAGES):
        for prefix in prefixes:
            if (module == prefix or module.startswith(prefix + ".")) and len(prefix) > len(best):
                best, rank = prefix, index
    assert rank >= 0, f"{module}: in no stage; add its subpackage to STAGES"
    return rank


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
    assert all(stage(name) >= 0 for name in MODULES)


def test_no_import_runs_back_up_the_flow() -> None:
    back = sorted(
        f"{name} (stage {stage(name)}) imports {target} (stage {stage(target)})"
        for name, targets in GRAPH.items()
        for target in targets
        if stage(target) > stage(name)
    )
    assert back == []


def test_no_import_cycles() -> None:
    cycles = []
    state: dict[str, int] = {}  # 1: on the current path, 2: done

    def visit(name: str, path: list[str]) -> None:
        state[name] = 1
        for target in sorted(GRAPH[name]):
            if state.get(target) == 1:
                cycles.append(" -> ".join(path[path.index(target) :] + [target]))
            elif target not in state:
                visit(target, path + [target])
        state[name] = 2

    for name in sorted(GRAPH):
        if name not in state:
            visit(name, [name])
    assert cycles == []


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

"""The layers of sweepaudit: every import points down (or across one layer) and no module imports itself
back through others.

Walks the AST of every module under src/sweepaudit: all Import and ImportFrom nodes, including
function-local imports and those under ``if TYPE_CHECKING:``. Internal consistency only: the table
below is the architecture (DEVELOPERS.md shows the same map; a test keeps the two equal).
"""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
SRC = ROOT / "src" / "sweepaudit"

#: Layer of each top-level module or subpackage of sweepaudit ("" is the package root, __init__.py).
#: A module may import from its own layer or below, never above.
LAYERS: dict[int, tuple[str, ...]] = {
    0: ("_version", "errors", "validate", "format", "readfile", "names"),
    1: ("sweep", "resample", "policy", "results"),
    2: ("read", "simulate", "ledger"),
    3: ("engine",),
    4: ("methods",),
    5: ("audit", "streamed"),
    6: ("baseline",),
    7: ("verdict", "sensitivity"),
    8: ("document",),
    9: ("render",),
    10: ("gate", "calibration"),
    11: ("api", "cli", "__main__", ""),
}

#: Stricter than the layers: what the pure layers may use at all. The methods and the engine work on
#: arrays and result types (no sweep, policy, file or document); the renderers format the document
#: and the figure material (no audit, method, verdict or baseline).
ONLY: dict[str, tuple[str, ...]] = {
    "methods": ("_version", "errors", "validate", "format", "results", "resample", "methods"),
    "engine": ("_version", "errors", "validate", "format", "results", "resample", "engine"),
    "render": ("_version", "errors", "validate", "format", "readfile", "results", "render"),
}


def _module_name(path: Path) -> str:
    parts = ("sweepaudit", *path.relative_to(SRC).with_suffix("").parts)
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


MODULES: dict[str, Path] = {_module_name(p): p for p in SRC.rglob("*.py")}


def _top(module: str) -> str:
    """The entry of LAYERS a module belongs to: its first component below sweepaudit."""
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else ""


def layer_of(module: str) -> int:
    top = _top(module)
    for layer, names in LAYERS.items():
        if top in names:
            return layer
    raise AssertionError(f"{module} is in no layer: add it to LAYERS (and to DEVELOPERS.md)")


def _package(module: str) -> str:
    return module if MODULES[module].name == "__init__.py" else module.rsplit(".", 1)[0]


def _targets(module: str, node: ast.AST) -> list[str]:
    """The sweepaudit modules an import statement loads (a name imported from a package that is a
    submodule counts as that submodule)."""
    out: list[str] = []
    if isinstance(node, ast.Import):
        for alias in node.names:
            name = alias.name
            while name and name not in MODULES:
                name = name.rpartition(".")[0]
            if name:
                out.append(name)
    elif isinstance(node, ast.ImportFrom):
        if node.level:
            base = _package(module)
            for _ in range(node.level - 1):
                base = base.rsplit(".", 1)[0]
            base = f"{base}.{node.module}" if node.module else base
        else:
            base = node.module or ""
        if base.split(".")[0] != "sweepaudit":
            return out
        for alias in node.names:
            candidate = f"{base}.{alias.name}"
            out.append(candidate if candidate in MODULES else base)
    return [t for t in out if t in MODULES]


def _graph() -> dict[str, set[str]]:
    graph: dict[str, set[str]] = {m: set() for m in MODULES}
    for module, path in MODULES.items():
        for node in ast.walk(ast.parse(path.read_text(), filename=str(path))):
            graph[module].update(t for t in _targets(module, node) if t != module)
    return graph


GRAPH = _graph()


def test_the_walk_sees_local_and_type_checking_imports():
    tree = ast.parse("def f():\n    from ..verdict import decide\nif TYPE_CHECKING:\n    from .. import audit\n")
    seen = [t for node in ast.walk(tree) for t in _targets("sweepaudit.methods.cscv", node)]
    assert seen == ["sweepaudit.verdict", "sweepaudit.audit"]
    assert _targets("sweepaudit.render.report.sections", ast.parse("from . import plots").body[0]) == [
        "sweepaudit.render.report.plots"]
    assert _targets("sweepaudit.ledger", ast.parse("from . import __version__").body[0]) == ["sweepaudit"]


def test_every_module_has_a_layer():
    for module in MODULES:
        layer_of(module)


@pytest.mark.parametrize("module", sorted(MODULES))
def test_no_module_imports_a_higher_layer(module):
    upward = sorted(t for t in GRAPH[module] if layer_of(t) > layer_of(module))
    assert not upward, f"{module} (layer {layer_of(module)}) imports " + ", ".join(
        f"{t} (layer {layer_of(t)})" for t in upward)


def test_the_pure_layers_use_only_what_they_may():
    for module, targets in GRAPH.items():
        allowed = ONLY.get(_top(module))
        if allowed is None:
            continue
        wrong = sorted(t for t in targets if _top(t) not in allowed)
        assert not wrong, f"{module} may not import {', '.join(wrong)}"


def test_the_import_graph_has_no_cycle():
    state: dict[str, int] = {}  # 1 on the current path, 2 done
    path: list[str] = []

    def visit(module: str) -> None:
        state[module] = 1
        path.append(module)
        for target in sorted(GRAPH[module]):
            if state.get(target) == 1:
                cycle = path[path.index(target):] + [target]
                raise AssertionError("import cycle: " + " -> ".join(cycle))
            if target not in state:
                visit(target)
        path.pop()
        state[module] = 2

    for module in sorted(MODULES):
        if module not in state:
            visit(module)


def test_developers_md_shows_the_same_layers():
    text = (ROOT / "DEVELOPERS.md").read_text()
    block = text.split("## Layer map", 1)[1].split("```", 2)[1]
    shown: dict[int, set[str]] = {}
    for line in block.splitlines():
        match = re.match(r"^L(\d+)\s+(.*)$", line)
        if match:
            names = re.findall(r"(?<![\w.])([a-z_]+)(?:/|\.py)", match.group(2))
            shown[int(match.group(1))] = set(names)
    expected = {layer: {n for n in names if n} | ({"__init__"} if "" in names else set())
                for layer, names in LAYERS.items()}
    assert shown == expected

"""The package's layers, read from the code's own imports (every import, also those inside
functions): each layer imports only the layers below it, no module imports itself round a loop,
and the pure layers never load optuna, plotly or pandas.

Layers, bottom to top: physics and fans (side by side, neither imports the other) -> model ->
study -> search -> results -> cli; ``sinkopt.errors`` is below everything, ``sinkopt.api`` and
``sinkopt.__main__`` sit on top.
"""
import ast
import subprocess
import sys
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "sinkopt"

#: What each layer may import from sinkopt (besides itself and sinkopt.errors).
ALLOWED = {
    "physics": set(),
    "fans": set(),
    "model": {"physics", "fans"},
    "study": {"physics", "fans", "model"},
    "search": {"physics", "fans", "model", "study"},
    "results": {"physics", "fans", "model", "study", "search"},
    "cli": {"physics", "fans", "model", "study", "search", "results"},
}
TOP_LEVEL = {"__init__", "__main__", "errors", "api"}


def _module_name(path: Path) -> str:
    parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def _imports(path: Path) -> set[str]:
    """Every ``sinkopt...`` module that ``path`` imports, at any depth of the code."""
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    found = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found.update(a.name for a in node.names if a.name.startswith("sinkopt"))
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            if node.module.startswith("sinkopt"):
                found.add(node.module)
                # "from sinkopt.x import y": y may be a module of package x
                for a in node.names:
                    found.add(f"{node.module}.{a.name}")
    return found


def _graph() -> dict[str, set[str]]:
    modules = {_module_name(p): p for p in PACKAGE.rglob("*.py")}
    graph = {}
    for name, path in modules.items():
        # keep only names that are modules of ours
        graph[name] = {m for m in _imports(path) if m in modules and m != name}
    return graph


def _layer(module: str) -> str:
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else "__init__"


def test_every_module_belongs_to_a_layer():
    unknown = [m for m in _graph() if _layer(m) not in ALLOWED and _layer(m) not in TOP_LEVEL]
    assert not unknown, f"modules outside the layers {sorted(ALLOWED)}: {unknown}"


@pytest.mark.parametrize("layer", sorted(ALLOWED))
def test_layer_imports_only_layers_below(layer):
    bad = []
    for module, deps in _graph().items():
        if _layer(module) != layer:
            continue
        for dep in deps:
            dep_layer = _layer(dep)
            if dep_layer in (layer, "errors", "__init__"):
                continue
            if dep_layer not in ALLOWED[layer]:
                bad.append(f"{module} -> {dep}")
    assert not bad, f"{layer} imports from a layer it must not: {bad}"


def test_no_import_loops():
    graph = _graph()
    # Package __init__ re-exports are edges too; a loop through them is a loop.
    state: dict[str, int] = {}
    loops = []

    def visit(node, stack):
        state[node] = 1
        stack.append(node)
        for dep in sorted(graph[node]):
            if state.get(dep) == 1:
                loops.append(stack[stack.index(dep):] + [dep])
            elif dep not in state:
                visit(dep, stack)
        stack.pop()
        state[node] = 2

    for node in sorted(graph):
        if node not in state:
            visit(node, [])
    assert not loops, "import loops: " + "; ".join(" -> ".join(loop) for loop in loops)


def test_the_loop_finder_finds_a_loop(tmp_path, monkeypatch):
    """The check above can fail: two modules that import each other are reported."""
    pkg = tmp_path / "sinkopt"
    (pkg / "search").mkdir(parents=True)
    (pkg / "__init__.py").write_text("")
    (pkg / "search" / "__init__.py").write_text("")
    (pkg / "search" / "a.py").write_text("def f():\n    from sinkopt.search import b\n")
    (pkg / "search" / "b.py").write_text("from sinkopt.search.a import f\n")
    monkeypatch.setattr(sys.modules[__name__], "PACKAGE", pkg)
    with pytest.raises(AssertionError, match="sinkopt.search.a -> sinkopt.search.b"):
        test_no_import_loops()


PURE = ["sinkopt.physics.air", "sinkopt.physics.convection", "sinkopt.physics.fin",
        "sinkopt.physics.geometry", "sinkopt.physics.heatsink", "sinkopt.physics.pressure_drop",
        "sinkopt.physics.spreading", "sinkopt.physics.stack", "sinkopt.physics.bypass",
        "sinkopt.model.known_flow", "sinkopt.model.system", "sinkopt.fans",
        "sinkopt.study.reader"]


@pytest.mark.parametrize("module", PURE)
def test_pure_modules_do_not_import_heavy_libraries(module):
    code = (f"import sys, {module}; bad = [m for m in ('optuna', 'plotly', 'pandas') if m in sys.modules];"
            "print(','.join(bad)); sys.exit(1 if bad else 0)")
    res = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert res.returncode == 0, f"{module} imports {res.stdout.strip()}{res.stderr[-300:]}"

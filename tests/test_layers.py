"""The package's import graph follows its layers (DEVELOPERS.md): no cycle,
and no module imports one of a later layer. Read from the source files, so a
new import that breaks the layering fails here."""
import ast
import os

import pytest

ROOT = os.path.join(os.path.dirname(__file__), "..", "ekexplore")

#: Layer of each core module, in the order of DEVELOPERS.md (lower first).
LAYERS = {
    "_constants": 0, "_validate": 0,
    "medium": 1,
    "electrolyte": 2, "chemistry": 2, "conductivity": 2,
    "wall": 3, "surface": 3,
    "doublelayer": 4, "_state": 4,
    "models": 5,
    "coefficients": 6,
    "profiles": 7,
    "kernels1d": 8,
    # the 2D pipeline, in its order
    "sections.grading": 8.0, "sections.blocks": 8.1, "sections.assembly": 8.2,
    "sections.meshes": 8.3, "sections.solvers": 8.4, "sections.series": 8.4,
    "sections.extrapolation": 8.4, "sections.solutions": 8.5, "sections.profiles": 8.6,
    "sections.kernel": 8.7,
    "channels": 9, "sections.shapes": 9, "sections": 9,
    "transport": 10,
    "regimes": 11,
    "sweep": 12,
    "_serve": 13,   # the dashboard server (dashboards layer)
}


def _imports():
    """module -> set of ekexplore modules it imports (anywhere in the file)."""
    graph = {}
    for dirpath, _, files in os.walk(ROOT):
        if "dashboards" in dirpath or "__pycache__" in dirpath:
            continue
        for f in files:
            if not f.endswith(".py") or f == "__main__.py":
                continue
            rel = os.path.relpath(os.path.join(dirpath, f), ROOT)[:-3].replace(os.sep, ".")
            mod = rel[: -len(".__init__")] if rel.endswith(".__init__") else rel
            if mod == "__init__":
                continue
            package = mod if f == "__init__.py" else mod.rpartition(".")[0]
            targets = set()
            for node in ast.walk(ast.parse(open(os.path.join(dirpath, f)).read())):
                if isinstance(node, ast.ImportFrom) and node.level:
                    parts = package.split(".") if package else []
                    parts = parts[: len(parts) - (node.level - 1)]
                    base = ".".join(parts + ([node.module] if node.module else []))
                    for alias in node.names:
                        sub = f"{base}.{alias.name}" if base else alias.name
                        targets.add(sub if sub in LAYERS else base)
                elif isinstance(node, ast.ImportFrom) and (node.module or "").startswith(
                        "ekexplore."):
                    targets.add(node.module[len("ekexplore."):])
            graph[mod] = {t for t in targets if t and t != mod}
    return graph


GRAPH = _imports()


def test_every_core_module_has_a_layer():
    assert sorted(set(GRAPH) - set(LAYERS)) == []


@pytest.mark.parametrize("module", sorted(GRAPH))
def test_imports_only_lower_or_equal_layers(module):
    for target in GRAPH[module]:
        assert target in LAYERS, f"{module} imports {target}, which has no layer"
        assert LAYERS[target] <= LAYERS[module], (
            f"{module} (layer {LAYERS[module]}) imports {target} (layer {LAYERS[target]})")


def test_no_import_cycle():
    def reach(start):
        seen, todo = set(), [start]
        while todo:
            for t in GRAPH.get(todo.pop(), ()):
                if t not in seen:
                    seen.add(t)
                    todo.append(t)
        return seen
    cyclic = [m for m in GRAPH if m in reach(m)]
    assert cyclic == []

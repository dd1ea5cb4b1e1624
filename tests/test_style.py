"""The code style the project follows, enforced: ruff with numpydoc docstring rules (pyproject.toml)."""

import ast
import re
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def test_ruff_is_clean():
    """`ruff check molid tests` reports nothing (pydocstyle numpy convention, pyflakes, bugbear)."""
    pytest.importorskip("ruff")
    result = subprocess.run([sys.executable, "-m", "ruff", "check", "molid", "tests"], cwd=ROOT,
                            capture_output=True, text=True)
    assert result.returncode == 0, result.stdout + result.stderr


def _modules():
    """Each module of the package: dotted name → parsed tree."""
    modules = {}
    for path in sorted((ROOT / "molid").rglob("*.py")):
        parts = list(path.relative_to(ROOT).with_suffix("").parts)
        if parts[-1] == "__init__":
            parts = parts[:-1]
        modules[".".join(parts)] = (path, ast.parse(path.read_text(encoding="utf-8")))
    return modules


def _imports(name, path, tree, known):
    """Modules of the package that a module imports, at the top or inside functions."""
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    found = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                parent = package.split(".")[: len(package.split(".")) - node.level + 1]
                base = ".".join(parent + ([base] if base else []))
            found.add(base)
            found.update(f"{base}.{alias.name}" for alias in node.names)
    # a module importing its own package (for a sibling) is not a cycle through the package
    return {other for other in found if other in known and other != name
            and not name.startswith(other + ".")}


def test_no_import_cycle():
    """Checks behaviour: no module of molid imports, through any chain, a module that imports it back."""
    modules = _modules()
    graph = {name: _imports(name, path, tree, modules) for name, (path, tree) in modules.items()}
    state = {}

    def visit(name, trail):
        state[name] = "open"
        for other in sorted(graph[name]):
            if state.get(other) == "open":
                cycle = trail[trail.index(other):] + [other]
                pytest.fail("import cycle: " + " -> ".join(cycle))
            if other not in state:
                visit(other, trail + [other])
        state[name] = "done"

    for name in sorted(graph):
        if name not in state:
            visit(name, [name])


def test_functions_are_short():
    """Checks behaviour: no function of molid is over 80 lines, docstring included (DEVELOPERS.md)."""
    long = [f"{path.relative_to(ROOT)}:{node.lineno} {node.name} ({node.end_lineno - node.lineno + 1})"
            for path, tree in _modules().values() for node in ast.walk(tree)
            if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef))
            and node.end_lineno - node.lineno + 1 > 80]
    assert long == []


def test_packages_import_only_packages_below_them():
    """Checks behaviour: the layer order of DEVELOPERS.md's tree holds (imports point down only)."""
    text = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    order = [match.group(1) for match in re.finditer(r"^  ([a-z_]+)(?:/|\.py)\s", text, re.MULTILINE)]
    rank = {name: position for position, name in enumerate(order)}
    upward = []
    modules = _modules()
    for name, (path, tree) in modules.items():
        parts = name.split(".")
        if len(parts) < 2 or parts[1] not in rank:
            continue
        for other in _imports(name, path, tree, modules):
            layer = other.split(".")[1] if other.count(".") else None
            if layer in rank and layer != parts[1] and rank[layer] < rank[parts[1]]:
                upward.append(f"{name} imports {other}")
    assert len(order) >= 10 and upward == []


def test_developers_guide_lists_every_module():
    """Checks behaviour: each module of molid has its line in DEVELOPERS.md's tree."""
    text = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    missing = [str(path.relative_to(ROOT)) for path in sorted((ROOT / "molid").rglob("*.py"))
               if path.name != "__init__.py" and path.name not in text]
    assert missing == []

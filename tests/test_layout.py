"""The package's shape: data flows one way, nothing below the CLI imports it, no import cycles.

The import graph is read from the source with :mod:`ast` (top-level and late imports alike, since a
late import is how a cycle hides), at the granularity of modules.
"""

from __future__ import annotations

import ast
import subprocess
import sys
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
PACKAGE = REPO / "loadcore"


def _module_name(path: Path) -> str:
    parts = list(path.relative_to(REPO).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def _modules() -> dict[str, Path]:
    return {_module_name(p): p for p in PACKAGE.rglob("*.py")}


def _imports(name: str, path: Path, known: set[str]) -> set[str]:
    """The loadcore modules that ``name`` imports."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    is_package = path.name == "__init__.py"
    package = name if is_package else name.rpartition(".")[0]
    found: set[str] = set()

    def resolve(target: str) -> str | None:
        while target and target not in known:
            target = target.rpartition(".")[0]
        return target or None

    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                if alias.name.startswith("loadcore"):
                    found.add(resolve(alias.name))
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[: len(base) - (node.level - 1)]
                module = ".".join(base + ([node.module] if node.module else []))
            else:
                module = node.module or ""
            if not module.startswith("loadcore"):
                continue
            for alias in node.names:
                full = f"{module}.{alias.name}"
                found.add(full if full in known else resolve(module))
    found.discard(None)
    found.discard(name)
    return found  # type: ignore[return-value]


def _graph() -> dict[str, set[str]]:
    modules = _modules()
    known = set(modules)
    return {name: _imports(name, path, known) for name, path in modules.items()}


def test_nothing_outside_the_cli_imports_the_cli():
    graph = _graph()
    offenders = sorted(
        f"{name} imports {target}"
        for name, targets in graph.items()
        if not (name == "loadcore.cli" or name.startswith("loadcore.cli."))
        and name != "loadcore.__main__"
        for target in targets
        if target == "loadcore.cli" or target.startswith("loadcore.cli.")
    )
    assert not offenders, offenders


def test_the_package_has_no_import_cycles():
    """Strongly connected components of the import graph (Tarjan, 1972) are all single modules."""
    graph = _graph()
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    cycles: list[list[str]] = []
    counter = [0]

    def visit(v: str) -> None:
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on_stack.add(v)
        for w in graph.get(v, ()):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on_stack:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            component = []
            while True:
                w = stack.pop()
                on_stack.discard(w)
                component.append(w)
                if w == v:
                    break
            if len(component) > 1:
                cycles.append(sorted(component))

    for v in sorted(graph):
        if v not in index:
            visit(v)
    assert not cycles, cycles


def test_the_app_is_not_imported_by_the_package():
    for name, path in _modules().items():
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            if isinstance(node, ast.ImportFrom) and (node.module or "").split(".")[0] == "app":
                raise AssertionError(f"{name} imports the app")
            if isinstance(node, ast.Import):
                assert not any(a.name.split(".")[0] == "app" for a in node.names), name


def test_python_dash_m_and_the_script_are_the_same_command():
    done = subprocess.run(
        [sys.executable, "-m", "loadcore", "--version"], capture_output=True, text=True, cwd=REPO
    )
    assert done.returncode == 0 and done.stdout.startswith("loadcore ")
    script = Path(sys.executable).with_name("loadcore")
    if script.exists():
        same = subprocess.run([str(script), "--version"], capture_output=True, text=True)
        assert same.stdout == done.stdout

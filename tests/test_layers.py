"""The rooms of ``tui`` import one way, and no package imports in a circle.

Two kinds of check:

- every module's source is read with ``ast`` (imports inside functions included) and each
  import is held against the layer rules below, and the import graph is searched for
  circles: between modules of one package, and between rooms;
- each core room is imported in a fresh interpreter and must not have loaded a screen
  library (this also catches a screen library pulled in by a third-party import).

Layers, lowest first: the root modules beside ``atomic.py`` (shared error type, name
matching, number text, file checks); intake and engine (the engine may read what intake
checked; intake never imports the engine); recodings; report and app; cli; ``__main__``.
"""

from __future__ import annotations

import ast
import subprocess
import sys
from collections.abc import Iterable
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "tui"
SCREEN_LIBRARIES = ("textual", "rich", "plotext", "textual_plotext")
ROOMS = ("intake", "engine", "recodings", "report", "app", "cli")
ROOT, ENTRY = "root", "entry"

# room -> rooms it must never import (a screen library counts as a room here).
FORBIDDEN: dict[str, set[str]] = {
    ROOT: set(ROOMS) | set(SCREEN_LIBRARIES),
    "intake": {"engine", "recodings", "report", "app", "cli", *SCREEN_LIBRARIES},
    "engine": {"recodings", "report", "app", "cli", *SCREEN_LIBRARIES},
    "recodings": {"report", "app", "cli", *SCREEN_LIBRARIES},
    "report": {"app", "cli"},
    "app": {"cli"},
    "cli": set(),
    ENTRY: set(),
}


def module_name(path: Path, package: Path) -> str:
    parts = list(path.relative_to(package.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def modules(package: Path) -> dict[str, Path]:
    """Every module of the package by dotted name (a package by its ``__init__``)."""
    return {module_name(p, package): p for p in sorted(package.rglob("*.py"))}


def imports(name: str, path: Path, known: Iterable[str]) -> set[str]:
    """What the module ``name`` imports anywhere in its source, as dotted names: modules
    of the package where they resolve to one, else the top-level name of the library."""
    known = set(known)
    is_package = path.name == "__init__.py"
    found: set[str] = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"), str(path))):
        if isinstance(node, ast.Import):
            targets = [alias.name for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:  # relative: from the module's own package upward
                anchor = name.split(".") if is_package else name.split(".")[:-1]
                anchor = anchor[: len(anchor) - (node.level - 1)]
                base = ".".join([*anchor, base] if base else anchor)
            # ``from tui import recodings`` names a module; ``from tui import x`` a value.
            targets = [
                f"{base}.{a.name}" if f"{base}.{a.name}" in known else base for a in node.names
            ]
        else:
            continue
        for target in targets:
            if target.split(".")[0] != "tui":
                found.add(target.split(".")[0])
                continue
            while target not in known and "." in target:  # a.b.c where c is a value
                target = target.rsplit(".", 1)[0]
            found.add(target)
    found.discard(name)
    return found


def room_of(name: str) -> str:
    parts = name.split(".")
    if parts[0] != "tui":
        return parts[0]  # a library
    if len(parts) == 1:
        return ROOT
    if parts[1] == "__main__":
        return ENTRY
    return parts[1] if parts[1] in ROOMS else ROOT


def layer_breaches(package: Path) -> list[str]:
    """Every import that goes against ``FORBIDDEN``, as ``module -> target`` lines."""
    known = modules(package)
    breaches = []
    for name, path in known.items():
        room = room_of(name)
        for target in sorted(imports(name, path, known)):
            if room_of(target) in FORBIDDEN[room]:
                breaches.append(f"{name} ({room}) -> {target} ({room_of(target)})")
    return breaches


def circles(graph: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected groups of more than one node (Tarjan's algorithm, iterative)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found: list[list[str]] = []
    counter = 0
    for start in sorted(graph):
        if start in index:
            continue
        work = [(start, iter(sorted(graph[start])))]
        index[start] = low[start] = counter
        counter += 1
        stack.append(start)
        on_stack.add(start)
        while work:
            node, edges = work[-1]
            advanced = False
            for nxt in edges:
                if nxt not in graph:
                    continue
                if nxt not in index:
                    index[nxt] = low[nxt] = counter
                    counter += 1
                    stack.append(nxt)
                    on_stack.add(nxt)
                    work.append((nxt, iter(sorted(graph[nxt]))))
                    advanced = True
                    break
                if nxt in on_stack:
                    low[node] = min(low[node], index[nxt])
            if advanced:
                continue
            work.pop()
            if work:
                low[work[-1][0]] = min(low[work[-1][0]], low[node])
            if low[node] == index[node]:
                group = []
                while True:
                    member = stack.pop()
                    on_stack.discard(member)
                    group.append(member)
                    if member == node:
                        break
                if len(group) > 1:
                    found.append(sorted(group))
    return found


def module_graph(package: Path) -> dict[str, set[str]]:
    known = modules(package)
    return {name: imports(name, path, known) & set(known) for name, path in known.items()}


def packages(package: Path) -> list[str]:
    return sorted(module_name(p, package) for p in package.rglob("__init__.py"))


def package_circles(package: Path, parent: str) -> list[list[str]]:
    """Circles among the modules directly in one package (its subpackages count as one)."""
    depth = parent.count(".") + 1

    def member(name: str) -> str | None:
        if name == parent or not name.startswith(parent + "."):
            return None
        return ".".join(name.split(".")[: depth + 1])

    graph: dict[str, set[str]] = {}
    for name, targets in module_graph(package).items():
        source = member(name)
        if source is None:
            continue
        edges = graph.setdefault(source, set())
        edges.update(t for t in map(member, targets) if t is not None and t != source)
    return circles(graph)


def room_circles(package: Path) -> list[list[str]]:
    graph: dict[str, set[str]] = {}
    for name, targets in module_graph(package).items():
        room = room_of(name)
        graph.setdefault(room, set()).update(room_of(t) for t in targets if room_of(t) != room)
    return circles(graph)


def test_every_import_goes_down_the_layers():
    assert layer_breaches(PACKAGE) == []


def test_no_circle_between_rooms():
    assert room_circles(PACKAGE) == []


@pytest.mark.parametrize("parent", packages(PACKAGE))
def test_no_circle_inside_a_package(parent):
    assert package_circles(PACKAGE, parent) == []


# --- the checks above can fail: each is run on a small planted package ------------------


def _plant(root: Path, files: dict[str, str]) -> Path:
    package = root / "tui"
    for rel, text in files.items():
        target = package / rel
        target.parent.mkdir(parents=True, exist_ok=True)
        target.write_text(text)
    for folder in [package, *[p for p in package.rglob("*") if p.is_dir()]]:
        (folder / "__init__.py").touch()
    return package


def test_a_function_level_import_against_the_layers_is_caught(tmp_path):
    package = _plant(
        tmp_path,
        {
            "intake/reader.py": "def f():\n    from tui.engine.fit import g\n    return g\n",
            "engine/fit.py": "from tui.intake import reader\n",
            "recodings/load.py": "from ..report import words\n",  # relative import
            "report/words.py": "import rich\n",  # allowed: the report may use rich
            "engine/draw.py": "import plotext as plt\n",
            "problems.py": "from tui import recodings\n",
        },
    )
    assert layer_breaches(package) == [
        "tui.engine.draw (engine) -> plotext (plotext)",
        "tui.intake.reader (intake) -> tui.engine.fit (engine)",
        "tui.problems (root) -> tui.recodings (recodings)",
        "tui.recodings.load (recodings) -> tui.report.words (report)",
    ]


def test_a_circle_is_caught_inside_a_package_and_between_rooms(tmp_path):
    package = _plant(
        tmp_path,
        {
            "engine/forms/base.py": "def spec():\n    from tui.engine.forms.registry import K\n",
            "engine/forms/registry.py": "from tui.engine.forms.base import spec\nK = 1\n",
            "engine/fit.py": "from tui.intake.reader import r\n",
            "intake/reader.py": "def r():\n    import tui.engine.fit\n",
        },
    )
    assert package_circles(package, "tui.engine.forms") == [
        ["tui.engine.forms.base", "tui.engine.forms.registry"]
    ]
    assert package_circles(package, "tui.engine") == []  # forms counts as one member here
    assert room_circles(package) == [["engine", "intake"]]


# --- a fresh interpreter: nothing below the app loads a screen library --------------------

CORE_MODULES = [
    "tui.engine.scan",
    "tui.engine.compare",
    "tui.engine.runner",
    "tui.engine.adjust",
    "tui.engine.forms",
    "tui.intake",
    "tui.intake.dataset",
    "tui.recodings",
    "tui.problems",
    "tui.names",
]


@pytest.mark.parametrize("module", CORE_MODULES)
def test_core_room_imports_no_screen_library(module):
    code = (
        f"import sys, {module}\n"
        f"bad = [m for m in sys.modules if m.split('.')[0] in {SCREEN_LIBRARIES!r}]\n"
        "print(','.join(bad))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "", f"{module} loaded {out.stdout.strip()}"

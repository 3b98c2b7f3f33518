"""The import graph of ``cage`` against the layers written in DEVELOPERS.md ("Layers").

Checked against the project's own architecture rule (DEVELOPERS.md, common practice for a
layered design): no import circles between modules, and no module imports from a layer
above its own. Every import counts, those inside functions too (read with ``ast`` from the
source, nothing is imported). The table itself lives in ``cage/layers.py``; DEVELOPERS.md
must show the same table. The checks are first run on small made-up graphs holding a circle
and an upward edge, so they are shown able to fail.
"""
from __future__ import annotations

import ast
import re
from pathlib import Path

from cage.layers import LAYERS, OUTSIDE, layer_of

PACKAGE = Path(__file__).resolve().parents[1] / "cage"
DEVELOPERS = Path(__file__).resolve().parents[1] / "DEVELOPERS.md"


def import_graph(package: Path = PACKAGE) -> dict[str, set[str]]:
    """{module: modules of the package it imports anywhere in its source}."""
    modules = {p.stem for p in package.glob("*.py")}
    graph = {m: set() for m in modules}
    for path in package.glob("*.py"):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            found = []
            if isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
                if node.module == "cage":
                    found = [a.name for a in node.names]
                elif node.module.startswith("cage."):
                    found = [node.module.split(".")[1]]
            elif isinstance(node, ast.ImportFrom) and node.level > 0:  # from . import x / from .x import y
                found = [node.module.split(".")[0]] if node.module else [a.name for a in node.names]
            elif isinstance(node, ast.Import):
                found = [a.name.split(".")[1] for a in node.names if a.name.startswith("cage.")]
            graph[path.stem].update(m for m in found if m in modules and m != path.stem)
    return graph


def circles(graph: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected groups of two or more modules (Tarjan's algorithm, iterative)."""
    index, low, on_stack, stack, out = {}, {}, set(), [], []
    counter = [0]
    for root in sorted(graph):
        if root in index:
            continue
        work = [(root, iter(sorted(graph[root])))]
        index[root] = low[root] = counter[0]
        counter[0] += 1
        stack.append(root)
        on_stack.add(root)
        while work:
            node, children = work[-1]
            advanced = False
            for child in children:
                if child not in graph:
                    continue
                if child not in index:
                    index[child] = low[child] = counter[0]
                    counter[0] += 1
                    stack.append(child)
                    on_stack.add(child)
                    work.append((child, iter(sorted(graph[child]))))
                    advanced = True
                    break
                if child in on_stack:
                    low[node] = min(low[node], index[child])
            if advanced:
                continue
            work.pop()
            if work:
                low[work[-1][0]] = min(low[work[-1][0]], low[node])
            if low[node] == index[node]:
                group = []
                while True:
                    m = stack.pop()
                    on_stack.discard(m)
                    group.append(m)
                    if m == node:
                        break
                if len(group) > 1:
                    out.append(sorted(group))
    return out


def upward_imports(graph: dict[str, set[str]], layers: dict[str, int], outside=()) -> list[str]:
    """Each import from a module into a module of a higher layer, as 'a (layer) -> b (layer)'."""
    out = []
    for a in sorted(graph):
        if a in outside:
            continue
        for b in sorted(graph[a]):
            if b in outside:
                continue
            if layers[b] > layers[a]:
                out.append(f"{a} ({layers[a]}) -> {b} ({layers[b]})")
    return out


# ----------------------------------------------------------------------------- the checks can fail

def test_circle_finder_finds_a_made_up_circle():
    graph = {"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}, "e": set()}
    assert circles(graph) == [["a", "b", "c"]]
    assert circles({"a": {"b"}, "b": set()}) == []
    assert circles({"p": {"q"}, "q": {"p"}, "r": {"r"}}) == [["p", "q"]]


def test_layer_check_finds_a_made_up_upward_edge():
    layers = {"low": 0, "mid": 1, "top": 2}
    assert upward_imports({"low": {"top"}, "mid": {"low"}, "top": {"mid"}}, layers) == ["low (0) -> top (2)"]
    assert upward_imports({"low": set(), "mid": {"low"}, "top": {"mid", "low"}}, layers) == []


def test_graph_reader_sees_imports_inside_functions(tmp_path):
    pkg = tmp_path / "cage"
    pkg.mkdir()
    (pkg / "low.py").write_text("def f():\n    from cage.high import g\n    return g\n")
    (pkg / "high.py").write_text("from cage import low\nimport cage.low\n")
    graph = import_graph(pkg)
    assert graph == {"low": {"high"}, "high": {"low"}}
    assert circles(graph) == [["high", "low"]]


# ----------------------------------------------------------------------------- the package

def test_every_module_has_one_layer():
    modules = {p.stem for p in PACKAGE.glob("*.py")} - set(OUTSIDE)
    listed = [m for _, mods in LAYERS for m in mods]
    assert len(listed) == len(set(listed)), "a module is listed in two layers"
    assert sorted(modules - set(listed)) == [], "modules without a layer in cage/layers.py"
    assert sorted(set(listed) - modules) == [], "cage/layers.py lists modules that do not exist"


def test_no_import_circles():
    assert circles(import_graph()) == []


def test_no_import_from_a_higher_layer():
    assert upward_imports(import_graph(), layer_of(), OUTSIDE) == []


def test_developers_md_shows_the_same_layers():
    """DEVELOPERS.md "Layers": one table row per layer, lowest first, modules in backticks."""
    text = DEVELOPERS.read_text(encoding="utf-8")
    section = text.split("\n## Layers", 1)[1]
    table = section[section.index("| layer |"):].split("\n\n", 1)[0]
    rows = []
    for line in table.splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) >= 2 and cells[0] and not set(cells[0]) <= set("-: ") and cells[0] != "layer":
            rows.append((cells[0], tuple(re.findall(r"`([A-Za-z_]+)\.py`", cells[1]))))
    assert rows == [(name, tuple(mods)) for name, mods in LAYERS]

"""The house rules of DEVELOPERS.md, read from the source (AST, nothing imported): they cannot quietly regress.

* No source file over 1,000 lines.
* No function over 120 lines, unless its docstring says why it must be "one piece".
* No import cycles between the project's modules, not even through an import inside a function
  (only imports under ``if TYPE_CHECKING:`` are left out: they never run).

The checkers are tested on small made-up trees first, so a rule that stopped seeing anything
would fail here rather than pass.  Tests are exempt from the size rules.
"""

from __future__ import annotations

import ast
import pathlib
from collections.abc import Iterator

import pytest

from tests.conftest import ROOT

MAX_FILE_LINES = 1000
MAX_FUNCTION_LINES = 120
#: The words a long function's docstring uses to say why it must stay one piece.
ONE_PIECE = "one piece"
#: The project's own source: the packages and the developer script (tests are exempt).
PACKAGES = ("solver", "sketchpad")
SCRIPTS = ("dev.py",)


def source_files(root: pathlib.Path) -> list[pathlib.Path]:
    """Every Python file of the project's packages and scripts below ``root``."""
    files = [f for pkg in PACKAGES if (root / pkg).is_dir() for f in sorted((root / pkg).rglob("*.py"))]
    return files + [root / s for s in SCRIPTS if (root / s).is_file()]


def module_name(root: pathlib.Path, path: pathlib.Path) -> str:
    """``solver/rigfile.py`` -> ``solver.rigfile``; a package's ``__init__.py`` -> the package."""
    parts = list(path.relative_to(root).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def long_files(root: pathlib.Path) -> list[str]:
    """``"path: N lines"`` for every source file over the limit."""
    out = []
    for f in source_files(root):
        n = len(f.read_text(encoding="utf-8").splitlines())
        if n > MAX_FILE_LINES:
            out.append(f"{f.relative_to(root)}: {n} lines")
    return out


def long_functions(root: pathlib.Path) -> list[str]:
    """``"path:line name (N lines)"`` for every function over the limit whose docstring does not say why."""
    out = []
    for f in source_files(root):
        tree = ast.parse(f.read_text(encoding="utf-8"), filename=str(f))
        for node in ast.walk(tree):
            if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
                n = node.end_lineno - node.lineno + 1
                doc = (ast.get_docstring(node) or "").lower()
                if n > MAX_FUNCTION_LINES and ONE_PIECE not in doc:
                    out.append(f"{f.relative_to(root)}:{node.lineno} {node.name} ({n} lines)")
    return out


def _runtime_imports(tree: ast.AST) -> Iterator[ast.Import | ast.ImportFrom]:
    """Every import statement that can run: at any depth, except under ``if TYPE_CHECKING:``."""
    stack = [tree]
    while stack:
        node = stack.pop()
        for child in ast.iter_child_nodes(node):
            if isinstance(child, ast.If) and "TYPE_CHECKING" in ast.unparse(child.test):
                stack.extend(child.orelse)
                continue
            if isinstance(child, (ast.Import, ast.ImportFrom)):
                yield child
            stack.append(child)


def import_graph(root: pathlib.Path) -> dict[str, set[str]]:
    """Project module -> the project modules it imports (a name imported from a package counts as its
    submodule when there is one)."""
    files = {module_name(root, f): f for f in source_files(root)}
    graph: dict[str, set[str]] = {name: set() for name in files}
    for name, f in files.items():
        is_pkg = f.name == "__init__.py"
        for node in _runtime_imports(ast.parse(f.read_text(encoding="utf-8"), filename=str(f))):
            if isinstance(node, ast.Import):
                targets = [a.name for a in node.names]
            else:
                base = node.module or ""
                if node.level:
                    here = name.split(".") if is_pkg else name.split(".")[:-1]
                    here = here[: len(here) - node.level + 1]
                    base = ".".join(here + ([base] if base else []))
                targets = [f"{base}.{a.name}" if f"{base}.{a.name}" in files else base for a in node.names]
            for t in targets:
                while t and t not in files:  # "import solver.x.y" names a module or its package
                    t = t.rpartition(".")[0]
                if t and t != name:
                    graph[name].add(t)
    return graph


def import_cycles(graph: dict[str, set[str]]) -> list[list[str]]:
    """The strongly connected groups of more than one module (Tarjan), each sorted."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    on_stack: set[str] = set()
    stack: list[str] = []
    out: list[list[str]] = []
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
            v, children = work[-1]
            for w in children:
                if w not in index:
                    index[w] = low[w] = counter
                    counter += 1
                    stack.append(w)
                    on_stack.add(w)
                    work.append((w, iter(sorted(graph[w]))))
                    break
                if w in on_stack:
                    low[v] = min(low[v], index[w])
            else:
                work.pop()
                if work:
                    low[work[-1][0]] = min(low[work[-1][0]], low[v])
                if low[v] == index[v]:
                    group = []
                    while True:
                        w = stack.pop()
                        on_stack.discard(w)
                        group.append(w)
                        if w == v:
                            break
                    if len(group) > 1:
                        out.append(sorted(group))
    return out


# --- the checkers see what they must (made-up trees) ---------------------------------------------


def _tree(tmp_path: pathlib.Path, files: dict[str, str]) -> pathlib.Path:
    for rel, text in files.items():
        p = tmp_path / rel
        p.parent.mkdir(parents=True, exist_ok=True)
        p.write_text(text, encoding="utf-8")
    return tmp_path


def test_the_cycle_finder_sees_a_cycle_through_an_import_inside_a_function(tmp_path):
    root = _tree(tmp_path, {
        "solver/__init__.py": "",
        "solver/a.py": "from solver.b import x\n",
        "solver/b.py": "def f():\n    from solver import a\n    return a\nx = 1\n",
        "solver/c.py": "from solver.d import y\n",  # d names c for type hints only: no cycle
        "solver/d.py": "from typing import TYPE_CHECKING\nif TYPE_CHECKING:\n    from solver.c import z\ny = 1\n",
        "sketchpad/__init__.py": "",
        "sketchpad/pages/__init__.py": "",
        "sketchpad/pages/p.py": "from . import q\n",
        "sketchpad/pages/q.py": "import sketchpad.pages.p\n",
    })
    graph = import_graph(root)
    assert graph["solver.c"] == {"solver.d"} and graph["solver.d"] == set()
    assert sorted(import_cycles(graph)) == [["sketchpad.pages.p", "sketchpad.pages.q"], ["solver.a", "solver.b"]]


def test_the_size_checkers_see_a_long_file_and_a_long_function_without_its_reason(tmp_path):
    body = "".join(f"    x{i} = {i}\n" for i in range(MAX_FUNCTION_LINES))
    root = _tree(tmp_path, {
        "solver/__init__.py": "",
        "solver/long.py": "def long():\n" + body,
        "solver/kept.py": f'def kept():\n    """Why this is {ONE_PIECE}: ..."""\n' + body,
        "solver/big.py": "x = 1\n" * (MAX_FILE_LINES + 1),
    })
    assert long_functions(root) == [f"solver/long.py:1 long ({MAX_FUNCTION_LINES + 1} lines)"]
    assert long_files(root) == [f"solver/big.py: {MAX_FILE_LINES + 1} lines"]


# --- the project keeps the rules ------------------------------------------------------------------


def test_the_checkers_read_the_whole_project():
    graph = import_graph(ROOT)
    assert {"solver.rigfile", "solver.equilibrium", "sketchpad.overlay.controller", "sketchpad.pages.schematic"} \
        <= set(graph)
    assert "solver.rigfile_build" in graph["solver.rigfile"]


@pytest.mark.parametrize("check", [long_files, long_functions], ids=["files", "functions"])
def test_no_source_file_or_function_is_over_its_size_limit(check):
    assert check(ROOT) == []


def test_there_are_no_import_cycles_not_even_inside_functions():
    assert import_cycles(import_graph(ROOT)) == []

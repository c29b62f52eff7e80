"""The import graph of orbitledger: no import circles, and the layers of DEVELOPERS.md hold.

The graph is read from the source with ``ast`` (nothing is imported): one node per module of
``orbitledger/``, ``widgets/`` (``orbitledger.widgets``) and ``reporting/``
(``orbitledger.reporting``); an edge per import, module-level imports apart from those inside
functions (which run later, on first use). Imports under ``if TYPE_CHECKING:`` are not edges.
``python tests/test_import_graph.py`` prints the circles and the layer breaches it finds.
"""

from __future__ import annotations

import ast
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
FOLDERS = {
    "orbitledger": "orbitledger",
    "widgets": "orbitledger.widgets",
    "reporting": "orbitledger.reporting",
}


def module_files() -> dict[str, Path]:
    """``{dotted module name: file}`` for every module of the three folders."""
    out = {}
    for folder, package in FOLDERS.items():
        for path in sorted((ROOT / folder).rglob("*.py")):
            parts = list(path.relative_to(ROOT / folder).with_suffix("").parts)
            if parts[-1] == "__init__":
                parts = parts[:-1]
            out[".".join([package, *parts])] = path
    return out


MODULES = module_files()


def _imported(module: str, is_package: bool, node: ast.Import | ast.ImportFrom) -> list[str]:
    if isinstance(node, ast.Import):
        return [alias.name for alias in node.names]
    if node.level:
        base = module if is_package else module.rsplit(".", 1)[0]
        for _ in range(node.level - 1):
            base = base.rsplit(".", 1)[0]
        source = base + ("." + node.module if node.module else "")
    else:
        source = node.module or ""
    # ``from package import submodule`` imports the submodule; ``from module import name``
    # the module.
    return [
        f"{source}.{alias.name}" if f"{source}.{alias.name}" in MODULES else source
        for alias in node.names
    ]


def _own_module(name: str) -> str | None:
    while name not in MODULES:
        if "." not in name:
            return None
        name = name.rsplit(".", 1)[0]
    return name


def import_graph() -> tuple[dict[str, set[str]], dict[str, set[str]]]:
    """(module-level edges, edges of imports inside functions), each ``{module: {module}}``."""
    top: dict[str, set[str]] = {m: set() for m in MODULES}
    inner: dict[str, set[str]] = {m: set() for m in MODULES}

    def walk(node: ast.AST, module: str, is_package: bool, in_function: bool) -> None:
        for child in ast.iter_child_nodes(node):
            if isinstance(child, ast.FunctionDef | ast.AsyncFunctionDef | ast.Lambda):
                walk(child, module, is_package, True)
            elif isinstance(child, ast.If) and "TYPE_CHECKING" in ast.unparse(child.test):
                for orelse in child.orelse:
                    walk(orelse, module, is_package, in_function)
            elif isinstance(child, ast.Import | ast.ImportFrom):
                for name in _imported(module, is_package, child):
                    target = _own_module(name)
                    if target and target != module:
                        (inner if in_function else top)[module].add(target)
            else:
                walk(child, module, is_package, in_function)

    for module, path in MODULES.items():
        tree = ast.parse(path.read_text(encoding="utf-8"), str(path))
        walk(tree, module, path.name == "__init__.py", False)
    return top, inner


def circles(graph: dict[str, set[str]]) -> list[list[str]]:
    """The strongly connected groups of more than one module (Tarjan's algorithm)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found: list[list[str]] = []
    counter = 0

    def visit(v: str) -> None:
        nonlocal counter
        index[v] = low[v] = counter
        counter += 1
        stack.append(v)
        on_stack.add(v)
        for w in sorted(graph.get(v, ())):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on_stack:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            group = []
            while True:
                w = stack.pop()
                on_stack.discard(w)
                group.append(w)
                if w == v:
                    break
            if len(group) > 1:
                found.append(sorted(group))

    for v in sorted(graph):
        if v not in index:
            visit(v)
    return found


def _in(module: str, *packages: str) -> bool:
    return any(module == p or module.startswith(p + ".") for p in packages)


def breaches(rules: dict[str, tuple[str, ...]], graph: dict[str, set[str]]) -> list[str]:
    """Edges from a module under a rule's package to any package the rule forbids."""
    out = []
    for module, targets in sorted(graph.items()):
        for package, forbidden in rules.items():
            if _in(module, package):
                out += [f"{module} -> {t}" for t in sorted(targets) if _in(t, *forbidden)]
    return out


TOP, INNER = import_graph()
ALL = {m: TOP[m] | INNER[m] for m in MODULES}

ABOVE_KERNEL = tuple(
    f"orbitledger.{p}"
    for p in ("case", "analysis", "figures", "trade", "cli", "widgets", "reporting", "exchange")
) + ("orbitledger.study",)

# The case package may import the kernel, the input limits and itself: nothing else of ours.
CASE_MAY_IMPORT = ("orbitledger.case", "orbitledger.kernel", "orbitledger.limits")

# Where the record shows a widget's static snapshot it reads the output's MIME type
# (``orbitledger.study.SNAPSHOT_MIME``), never the widget: reporting imports no widget module.
REPORTING_WIDGET_IMPORTS: frozenset[str] = frozenset()


def test_the_graph_is_read():
    # A graph that found nothing would pass every check below.
    assert len(MODULES) > 150
    assert "orbitledger.reporting.build" in MODULES and "orbitledger.widgets.editor" in MODULES
    assert "orbitledger.reporting.assembly" in TOP["orbitledger.reporting.build"]
    assert "orbitledger.kernel.errors" in TOP["orbitledger.case.errors"]
    assert circles({"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}}) == [["a", "b", "c"]]


def test_no_import_circles_among_module_level_imports():
    assert circles(TOP) == []


def test_no_import_circles_counting_imports_inside_functions():
    # An import deferred into a function hides a circle from Python but not from the reader:
    # the modules still depend on each other. None are left (trade evaluate <-> sweep and
    # reporting build -> render_html -> exporter -> build were the last two).
    assert circles(ALL) == []


def test_the_kernel_imports_nothing_above_it():
    assert breaches({"orbitledger.kernel": ABOVE_KERNEL}, ALL) == []


def test_reporting_imports_no_widgets():
    found = breaches({"orbitledger.reporting": ("orbitledger.widgets",)}, ALL)
    assert {line.split(" -> ")[0] for line in found} <= REPORTING_WIDGET_IMPORTS, found


def test_the_case_package_imports_only_the_kernel_and_the_limits():
    ours = {t for m, targets in ALL.items() if _in(m, "orbitledger.case") for t in targets}
    assert {t for t in ours if not _in(t, *CASE_MAY_IMPORT)} == set()


def test_exchange_does_not_import_the_command_line():
    assert breaches({"orbitledger.exchange": ("orbitledger.cli",)}, ALL) == []


if __name__ == "__main__":
    for kind, graph in (("module-level", TOP), ("with function-level imports", ALL)):
        print(f"circles ({kind}):", circles(graph) or "none")
    print("kernel imports above it:", breaches({"orbitledger.kernel": ABOVE_KERNEL}, ALL) or "none")

"""The package's layout: no import cycle between its modules, and no module too long.

Every module under symcluster/ is parsed with Python's ``ast`` (nothing is imported), and
an edge A -> B is recorded for every import of a symcluster module B by A: absolute and
relative imports, at module level and inside functions or classes alike.  Importing a
module also runs the ``__init__`` of each package on its path, so ``import
symcluster.x.y`` counts as an edge to ``symcluster.x`` as well as to ``symcluster.x.y``;
``from symcluster.x import name`` is an edge to ``symcluster.x.name`` when that is a
module, else to ``symcluster.x``.  A module's own packages are left out as targets: they
are always imported before the module itself (so the top package, the public API that
imports from every layer, is a target of no module inside it).  A cycle among the rest is
a module that needs something from a later stage (DEVELOPERS.md, "Layout").

Modules stay well under 1,500 lines (DEVELOPERS.md; common practice, no source).
"""

import ast
import pathlib

PACKAGE = pathlib.Path(__file__).resolve().parent.parent / "symcluster"
MAX_LINES = 1500


def _modules():
    """{dotted module name: path} of every module of the package."""
    out = {}
    for path in sorted(PACKAGE.rglob("*.py")):
        parts = list(path.relative_to(PACKAGE.parent).with_suffix("").parts)
        if parts[-1] == "__init__":
            parts.pop()
        out[".".join(parts)] = path
    return out


def _resolve(module, is_package, node):
    """The absolute dotted name a ``from ... import`` refers to, from inside ``module``."""
    if node.level == 0:
        return node.module or ""
    base = module.split(".")
    if not is_package:
        base = base[:-1]                # a module's level 1 is its package
    base = base[:len(base) - (node.level - 1)]
    return ".".join(base + ([node.module] if node.module else []))


def _with_parents(name):
    """``a.b.c`` and the packages whose ``__init__`` importing it runs: a.b, a."""
    parts = name.split(".")
    return [".".join(parts[:k]) for k in range(len(parts), 0, -1)]


def import_graph():
    """{module: set of symcluster modules it imports} (see the module docstring)."""
    modules = _modules()
    graph = {}
    for name, path in modules.items():
        is_package = path.name == "__init__.py"
        targets = set()
        for node in ast.walk(ast.parse(path.read_text(), filename=str(path))):
            if isinstance(node, ast.Import):
                names = [alias.name for alias in node.names]
            elif isinstance(node, ast.ImportFrom):
                base = _resolve(name, is_package, node)
                names = [f"{base}.{alias.name}" if f"{base}.{alias.name}" in modules else base
                         for alias in node.names]
            else:
                continue
            for target in names:
                if target == "symcluster" or not target.startswith("symcluster."):
                    continue
                targets.update(t for t in _with_parents(target) if t in modules)
        # a module's own packages (symcluster, symcluster.algebra for algebra.block) are
        # always imported before it, so importing from them runs no __init__ anew
        graph[name] = targets - set(_with_parents(name))
    return graph


def find_cycle(graph):
    """One cycle as a list of modules [a, b, ..., a], or None (depth-first search)."""
    state = {}                                  # module -> 1 on the stack, 2 done
    stack = []

    def visit(node):
        state[node] = 1
        stack.append(node)
        for nxt in sorted(graph.get(node, ())):
            if state.get(nxt) == 1:
                return stack[stack.index(nxt):] + [nxt]
            if nxt not in state:
                found = visit(nxt)
                if found:
                    return found
        stack.pop()
        state[node] = 2
        return None

    for node in sorted(graph):
        if node not in state:
            found = visit(node)
            if found:
                return found
    return None


def test_the_graph_sees_relative_absolute_and_function_level_imports():
    # the parser itself: a few edges that must be there (written in the package today)
    graph = import_graph()
    assert "symcluster.errors" in graph["symcluster.verify.core"]             # top level
    assert "symcluster.algebra.block" in graph["symcluster.algebra.charpoly"]   # absolute
    assert "symcluster.blocks.eigvec" in graph["symcluster.spectrum"]          # inside a method
    assert "symcluster.numeric" in graph["symcluster.verify.core"]           # a package's __init__


def test_the_cycle_finder_finds_a_planted_cycle():
    assert find_cycle({"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}}) == ["a", "b", "c", "a"]
    assert find_cycle({"a": {"b"}, "b": set(), "c": {"a", "b"}}) is None


def test_no_import_cycle():
    cycle = find_cycle(import_graph())
    assert cycle is None, "import cycle: " + " -> ".join(cycle)


def test_numeric_layer_sits_between_algebra_and_spectrum():
    # the layers of DEVELOPERS.md: algebra never imports numeric, numeric never imports
    # spectrum, verify or solve; spectrum does not import verify or solve
    graph = import_graph()

    def reach(start):
        seen, todo = set(), [start]
        while todo:
            for nxt in graph[todo.pop()]:
                if nxt not in seen:
                    seen.add(nxt)
                    todo.append(nxt)
        return seen

    for name in graph:
        below = reach(name)
        if name.startswith("symcluster.algebra"):
            assert not any(m.startswith("symcluster.numeric") for m in below), name
        if name.startswith("symcluster.numeric"):
            assert not below & {"symcluster.spectrum", "symcluster.verify.core", "symcluster.pipeline.solve",
                                "symcluster.pipeline.resources"}, name
    assert not reach("symcluster.spectrum") & {"symcluster.verify.core", "symcluster.pipeline.solve"}


#: The stages of the package, lowest first (docs/architecture.md has the same table): a
#: module may import modules of its own folder and of any lower stage, never a higher one.
STAGES = [
    {"errors", "symbols", "parsing", "tiers", "interrupts", "workers", "linalg", "version"},
    {"lattice"}, {"hilbert"}, {"models"}, {"symmetry"}, {"algebra"}, {"blocks"},
    {"numeric"}, {"spectrum", "display", "frames"}, {"verify"}, {"pipeline"}, {"export", "analysis"},
    {"response"}, {"theorems"}, {"catalogue"},
    {"cli", "__main__"},
]


def _stage(module):
    parts = module.split(".")
    if len(parts) == 1:
        return len(STAGES)              # the package itself: the public API, above all
    for k, names in enumerate(STAGES):
        if parts[1] in names:
            return k
    raise AssertionError(f"{module} is in no stage of STAGES; add its folder to the table")


def test_imports_go_only_downward_through_the_stages():
    graph = import_graph()
    upward = sorted(f"{a} -> {b}" for a, targets in graph.items() for b in targets
                    if _stage(b) > _stage(a))
    assert not upward, "imports of a higher stage: " + "; ".join(upward)


def test_no_module_exceeds_the_line_limit():
    too_long = {name: n for name, path in _modules().items()
                if (n := len(path.read_text().splitlines())) > MAX_LINES}
    assert not too_long, f"modules over {MAX_LINES} lines: {too_long}"

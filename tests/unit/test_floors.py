"""The house's floors: every package imports only from its own floor or below, and no module imports itself round.

The order is the data flow, documented in DEVELOPERS.md ("The floors").  The
check walks every ``import`` in the source with :mod:`ast`, those inside
functions included, so a late import cannot hide a circle.
"""

import ast
from pathlib import Path

import pytest

# Read as text, never imported: a circle must fail this test, not its collection.
PACKAGE = Path(__file__).resolve().parents[2] / "bemcheck"

# Lowest first.  The base modules (no package of their own) are floor 0.
FLOORS = (
    ("errors", "memory", "settings", "frames", "observers"),
    ("case",),
    ("mesh", "geometry_scripts"),
    ("solvers",),
    ("compare",),
    ("prebuild",),
    ("results",),
    ("report",),
    ("run",),
    ("explore",),
    ("cli", "__main__"),
)
FLOOR_OF = {name: level for level, names in enumerate(FLOORS) for name in names}
# The package's own __init__ is the public API: it may import any floor.
TOP = "bemcheck"
MAX_LINES = 450


def _module_name(path):
    parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def _imports(path):
    """Every bemcheck module ``path`` imports, anywhere in its body."""
    tree = ast.parse(path.read_text(), filename=str(path))
    package = _module_name(path) if path.name == "__init__.py" else _module_name(path).rpartition(".")[0]
    found = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found.update(a.name for a in node.names if a.name.split(".")[0] == TOP)
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - node.level + 1]
                module = ".".join(base + ([node.module] if node.module else []))
            else:
                module = node.module or ""
            if module.split(".")[0] != TOP:
                continue
            found.add(module)
            # `from bemcheck.cli import check` names a submodule
            for alias in node.names:
                if (PACKAGE.parent / Path(*module.split("."), alias.name)).with_suffix(".py").exists():
                    found.add(f"{module}.{alias.name}")
    return found


def _floor(module):
    parts = module.split(".")
    if len(parts) == 1:
        return None
    return FLOOR_OF.get(parts[1])


SOURCES = sorted(PACKAGE.rglob("*.py"))


def test_every_package_has_a_floor():
    names = {p.relative_to(PACKAGE).parts[0].removesuffix(".py") for p in SOURCES} - {"__init__"}
    assert names <= set(FLOOR_OF), f"give these a floor in FLOORS and DEVELOPERS.md: {sorted(names - set(FLOOR_OF))}"


@pytest.mark.parametrize("path", SOURCES, ids=lambda p: str(p.relative_to(PACKAGE)))
def test_no_import_goes_up_a_floor(path):
    module = _module_name(path)
    if module == TOP:
        return
    own = _floor(module)
    upward = sorted(m for m in _imports(path) if _floor(m) is not None and _floor(m) > own)
    assert not upward, f"{module} (floor {own}) imports from a higher floor: {upward}"


def test_no_module_imports_itself_round():
    graph = {_module_name(p): {m for m in _imports(p) if m != TOP} for p in SOURCES}
    # an import of a package also runs its __init__, which is a module of the graph
    state = {}

    def visit(node, trail):
        state[node] = "open"
        for nxt in sorted(graph.get(node, ())):
            if state.get(nxt) == "open":
                cycle = trail[trail.index(nxt) :] + [nxt]
                # a package's __init__ importing its own submodules is not a circle
                if not all(m.startswith(cycle[0] + ".") or m == cycle[0] for m in cycle[1:-1]):
                    pytest.fail("import circle: " + " -> ".join(cycle))
            elif nxt not in state:
                visit(nxt, trail + [nxt])
        state[node] = "done"

    for node in sorted(graph):
        if node not in state:
            visit(node, [node])


@pytest.mark.parametrize("path", SOURCES, ids=lambda p: str(p.relative_to(PACKAGE)))
def test_modules_stay_readable(path):
    """Common practice, no source: a module a reader can hold in mind."""
    lines = len(path.read_text().splitlines())
    assert lines <= MAX_LINES, f"{path.name}: {lines} lines; split it by concept (at most {MAX_LINES})"

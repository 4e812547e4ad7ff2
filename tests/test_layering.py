"""Data flows one way: device -> circuit -> analysis -> views (and the command line on top).

Reads every module's source with :mod:`ast` (no import needed, so a lazy import inside a
function counts as much as one at the top) and checks that no module imports a layer above
its own. Common practice for layered packages (the same rule import-linter's "layers"
contract enforces); there is no outside reference for a package's own layering.

Presentation hooks are the one sanctioned exception: a result object's ``plot``,
``_repr_html_`` and ``__repr__`` (and ``Receiver.budget``, whose tables are a view of the
evaluation) may hand themselves to :mod:`photorx.views` (as python-control's response
objects do with their plotting module), and only lazily, inside that method.
"""

from __future__ import annotations

import ast
import functools
from pathlib import Path

import pytest

import photorx

PACKAGE = Path(photorx.__file__).parent

# Rank of each layer: a module may import its own rank or lower. Helpers shared by all
# layers (errors, units, constants, validation, data files) rank lowest.
# The design-file reader builds a Receiver from a file, so it sits with analysis.
_RANK = {"device": 1, "circuit": 2, "analysis": 3, "symbolic": 3, "designfile": 3,
         "views": 4, "cli": 5}
_BASE = 0

# Function names inside which a lower layer may import photorx.views lazily (presentation).
_PRESENTATION_HOOKS = {"plot", "_repr_html_", "__repr__", "_repr_latex_", "budget"}

# Imports that still cross the layering the wrong way: a ratchet, each to be removed as the
# code is mended (the test fails when one disappears, so the list cannot go stale), and no
# entry may be added. Empty since Tia.noise's spectrum moved to circuit/ and the budget
# tables to views/.
_PENDING: set = set()


def _module_name(path: Path) -> str:
    rel = path.relative_to(PACKAGE.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _layer(module: str) -> int:
    parts = module.split(".")
    if len(parts) < 2:
        return _BASE
    return _RANK.get(parts[1], _BASE)


def _resolve(module: str, is_package: bool, node: ast.ImportFrom) -> list[str]:
    if node.level == 0:
        base = node.module or ""
    else:
        anchor = module.split(".")
        if not is_package:
            anchor = anchor[:-1]
        anchor = anchor[: len(anchor) - (node.level - 1)]
        base = ".".join(anchor + ([node.module] if node.module else []))
    if node.module is None:  # "from . import x": each name may be a module
        return [f"{base}.{alias.name}" for alias in node.names]
    return [base]


def _imports(path: Path):
    """(imported module, enclosing function name or None) for every import in the file."""
    module = _module_name(path)
    tree = ast.parse(path.read_text(encoding="utf-8"))
    found = []

    def visit(node, function):
        for child in ast.iter_child_nodes(node):
            inner = child.name if isinstance(child, (ast.FunctionDef, ast.AsyncFunctionDef)) \
                else function
            if isinstance(child, ast.Import):
                found.extend((alias.name, function) for alias in child.names)
            elif isinstance(child, ast.ImportFrom):
                found.extend((name, function)
                             for name in _resolve(module, path.name == "__init__.py", child))
            visit(child, inner)

    visit(tree, None)
    return [(name, fn) for name, fn in found if name.startswith("photorx.") or name == "photorx"]


MODULES = sorted(p for p in PACKAGE.rglob("*.py"))


@functools.cache
def _violations():
    out = {}
    for path in MODULES:
        module = _module_name(path)
        if module == "photorx":  # the package's lazy public namespace names every layer
            continue
        own = _layer(module)
        for imported, function in _imports(path):
            if _layer(imported) <= own:
                continue
            if imported.startswith("photorx.views") and function in _PRESENTATION_HOOKS:
                continue
            out.setdefault((module, ".".join(imported.split(".")[:3])), function)
    return out


def test_the_scan_sees_imports():
    # guards the test itself: a resolver that returned nothing would pass every module
    found = dict(_imports(PACKAGE / "analysis" / "evaluation.py"))
    assert "photorx.circuit.metrics" in found
    # a lazy import inside a method is seen, with the method's name
    lazy = [fn for name, fn in _imports(PACKAGE / "analysis" / "optimize.py")
            if name.startswith("photorx.views")]
    assert lazy and all(fn == "plot" for fn in lazy)


def test_layers_are_ranked_as_documented():
    assert _layer("photorx.device.junction_abrupt") < _layer("photorx.circuit.tia") \
        < _layer("photorx.analysis.receiver") < _layer("photorx.views.tables") \
        < _layer("photorx.cli")
    assert _layer("photorx.errors") == _layer("photorx.units") == _BASE


@pytest.mark.parametrize("path", MODULES, ids=lambda p: _module_name(p))
def test_no_module_imports_a_higher_layer(path):
    module = _module_name(path)
    bad = {edge: fn for edge, fn in _violations().items() if edge[0] == module}
    new = {edge: fn for edge, fn in bad.items() if edge not in _PENDING}
    assert not new, f"{module} imports a higher layer: {new}"


def test_pending_exceptions_are_still_needed():
    stale = _PENDING - set(_violations())
    assert not stale, f"mended, remove from _PENDING: {sorted(stale)}"

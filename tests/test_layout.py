"""The package's architecture, enforced: imports run one way, from the web app and the CLI down to the colour maths.

Layers, bottom to top: the shared bottom modules (errors, version, assets); ``colorimetry``; ``profiles`` and the
shipped ``data``; ``experiment``; ``audit``; ``sessions``; then ``cli`` and ``web``. A module may import its own
layer and those below it; the two top layers do not import each other, except ``stimlab serve`` starting the web
app. Only ``web`` imports Flask. The test walks every import statement, those inside functions included.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).parents[1] / "stimlab"
LAYERS = {"errors": 0, "version": 0, "assets": 0, "jsonio": 0.5, "schemas": 0.5, "figures": 0.5, "colorimetry": 1, "profiles": 2, "data": 2, "experiment": 3,
# jsonio sits on errors and under everything else: the one strict JSON parser every layer reads with; figures is
# the one matplotlib renderer and cache that the display, session and study figures share.
          "audit": 4, "sessions": 5, "cli": 6, "web": 6}
WEB_ONLY = ("flask", "werkzeug", "jinja2")
ALLOWED_ACROSS_TOP = {("stimlab.cli.serve_cmd", "web")}


def _modules():
    for path in sorted(PACKAGE.rglob("*.py")):
        parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
        is_package = parts[-1] == "__init__"
        name = ".".join(parts[:-1] if is_package else parts)
        yield name, is_package, path


def _imports(name: str, is_package: bool, path: Path):
    """Every (imported module, line) of a source file, relative imports resolved."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    base = name.split(".") if is_package else name.split(".")[:-1]
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                yield alias.name, node.lineno
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                parent = base[:len(base) - node.level + 1]
                target = ".".join(parent + ([node.module] if node.module else []))
            else:
                target = node.module
            yield target, node.lineno
            for alias in node.names:  # `from . import module` imports a module too
                candidate = f"{target}.{alias.name}"
                if (PACKAGE.parent / Path(*candidate.split("."))).with_suffix(".py").exists():
                    yield candidate, node.lineno


def _layer(module: str):
    parts = module.split(".")
    if parts[0] != "stimlab" or len(parts) == 1:
        return None
    return parts[1]


MODULES = list(_modules())
GRAPH = {name: {(t, line) for t, line in _imports(name, pkg, path)} for name, pkg, path in MODULES}


def test_every_subpackage_has_a_layer():
    for name, _, _ in MODULES:
        layer = _layer(name)
        if layer is not None and layer not in ("templates", "static", "protocols"):
            assert layer in LAYERS, f"{name}: add its subpackage to LAYERS in this test"


@pytest.mark.parametrize("name,is_package,path", MODULES, ids=[m[0] for m in MODULES])
def test_imports_run_downwards(name, is_package, path):
    own = _layer(name)
    if own is None:  # stimlab/__init__.py: the public facade may import from any layer
        return
    for target, line in GRAPH[name]:
        top = target.split(".")[0]
        assert not (top in WEB_ONLY and own != "web"), f"{path}:{line}: only stimlab.web may import {top}"
        layer = _layer(target)
        if layer is None:
            assert target != "stimlab", f"{path}:{line}: import from the module that defines it, not from stimlab"
            continue
        if layer == own:
            continue
        assert LAYERS[layer] < LAYERS[own] or (name, layer) in ALLOWED_ACROSS_TOP, \
            f"{path}:{line}: {name} ({own}) imports {target} ({layer}), which is not below it"


def test_no_import_cycles():
    names = {n for n, _, _ in MODULES}
    edges = {n: sorted({t for t, _ in GRAPH[n] if t in names and t != n}) for n in names}
    state: dict[str, int] = {}

    def visit(node, stack):
        state[node] = 1
        for nxt in edges[node]:
            # A package's __init__ importing its own modules is how a package exports; not a cycle of logic.
            if node == nxt.rsplit(".", 1)[0] or nxt == "stimlab":
                continue
            if state.get(nxt) == 1:
                cycle = stack[stack.index(nxt):] + [nxt] if nxt in stack else [node, nxt]
                pytest.fail("import cycle: " + " -> ".join(cycle))
            if nxt not in state:
                visit(nxt, stack + [nxt])
        state[node] = 2

    for n in sorted(names):
        if n not in state:
            visit(n, [n])

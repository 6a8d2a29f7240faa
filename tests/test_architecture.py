"""The package layout keeps the data flow one way (docs/ARCHITECTURE.md)."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "subsurf"

#: Rank of each layer along the data flow; a module may import its own rank or lower ones.
#: cli → io/site → planning/detection/interpretation → waves → ground (docs/ARCHITECTURE.md).
RANK = {"ground": 0, "waves": 1, "detection": 2, "planning": 3, "interpretation": 3,
        "site": 4, "io": 4, "cli": 5}
#: Shared by every layer: the error family, unit parsing and file-schema machinery at the edges, the package root.
SHARED = {"errors", "units", "safety", "_schema", "quantities", ""}
#: Public re-export paths named in the design; library code imports the layer, not these.
SHIMS = {"soil", "propagation", "velocity"}

#: Lines a module may have before it is too long to read in one sitting (STYLE.md).
MAX_LINES = 400
#: Modules still over the limit, each to be split; the list may only shrink.
OVERSIZE: set[str] = set()


def _modules():
    for path in sorted(PACKAGE.rglob("*.py")):
        rel = path.relative_to(PACKAGE)
        yield rel, ast.parse(path.read_text(encoding="utf-8"), filename=str(path))


def _imported(rel: Path, tree: ast.AST):
    """Absolute subsurf module names imported anywhere in ``tree`` (function bodies included)."""
    package = ["subsurf", *rel.parent.parts]
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                if alias.name.split(".")[0] == "subsurf":
                    yield alias.name, node.lineno
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package[: len(package) - (node.level - 1)]
                name = ".".join(base + ([node.module] if node.module else []))
            else:
                name = node.module or ""
            if name.split(".")[0] != "subsurf":
                continue
            if name == "subsurf" or name.count(".") == 0:
                for alias in node.names:
                    yield f"subsurf.{alias.name}", node.lineno
            else:
                yield name, node.lineno


def _layer(module: str) -> str:
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else ""


def test_no_library_module_imports_the_command_layer():
    """Only subsurf/cli may import subsurf.cli."""
    bad = [f"{rel}:{line} imports {name}" for rel, tree in _modules()
           if rel.parts[0] != "cli" and str(rel) != "__main__.py"
           for name, line in _imported(rel, tree) if _layer(name) == "cli"]
    assert not bad, "library modules import the command layer:\n" + "\n".join(bad)


def test_imports_follow_the_data_flow():
    """A layer imports only its own or lower layers, the shared helpers, never the shims."""
    bad = []
    for rel, tree in _modules():
        own = rel.parts[0] if len(rel.parts) > 1 else rel.stem
        if own not in RANK:
            continue
        for name, line in _imported(rel, tree):
            target = _layer(name)
            if target in SHARED or target in ("__version__", "config_dir", "__init__"):
                continue
            if target in SHIMS:
                bad.append(f"{rel}:{line} imports the public shim {name}; import its layer instead")
            elif target in RANK and RANK[target] > RANK[own]:
                bad.append(f"{rel}:{line} ({own}) imports {name} ({target}), against the data flow")
    assert not bad, "\n".join(bad)


@pytest.mark.parametrize("rel", sorted(str(r) for r, _ in _modules()))
def test_module_is_short_enough_to_read(rel):
    """Every module stays under MAX_LINES, except the listed ones awaiting a split."""
    n = len((PACKAGE / rel).read_text(encoding="utf-8").splitlines())
    if rel in OVERSIZE:
        assert n > MAX_LINES, f"{rel} is now {n} lines: remove it from OVERSIZE"
    else:
        assert n <= MAX_LINES, f"{rel} has {n} lines (limit {MAX_LINES}): split it by idea"


def test_every_layer_says_what_it_owns():
    """Each layer's __init__ opens with a docstring stating what it owns."""
    missing = [layer for layer in RANK
               if not ast.get_docstring(ast.parse((PACKAGE / layer / "__init__.py").read_text()))]
    assert not missing, f"layers without an ownership docstring: {missing}"

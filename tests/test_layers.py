"""The one-way layers of DEVELOPERS.md ("Layout"), read from the source of every module.

Every import of every module is read with an AST pass, including imports inside functions (a lazy import
is still an arrow).  A module may import from its own layer and the layers above it, never from one
below; the readers in ``io`` may import only the core and other readers (they produce model types);
no module imports a private name (``_x``) from another module.  There is no list of exceptions: a new
arrow against the order fails here, and the fix is to move the code, not to list it.
"""

from __future__ import annotations

import ast
import pathlib

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[1]

# top-level folder -> installed package (the pyproject package-dir mapping)
FOLDERS = {
    "heatloom": "heatloom",
    "equipment": "heatloom.equipment",
    "pinch": "heatloom.pinch",
    "network": "heatloom.network",
    "retrofit": "heatloom.retrofit",
    "studies": "heatloom.studies",
    "io": "heatloom.io",
}

# the order of DEVELOPERS.md, top first: each layer may use itself and those above it
LAYERS = (
    ("core", ("heatloom", "heatloom.errors", "heatloom.model", "heatloom.defaults", "heatloom.validation",
              "heatloom.tasks")),
    ("equipment", ("heatloom.equipment",)),
    ("pinch", ("heatloom.pinch",)),
    ("network", ("heatloom.network",)),
    ("retrofit", ("heatloom.retrofit",)),
    ("studies", ("heatloom.studies",)),
    ("io", ("heatloom.io",)),
    ("commands", ("heatloom.commands", "heatloom.cli", "heatloom.__main__")),
)

# io modules that read user files: they may use the core and each other only
READERS = frozenset(f"heatloom.io.{m}" for m in (
    "tables", "cells", "cases", "units", "streams", "utilities", "points", "costs", "network_table", "site", "scenarios",
))


def _layer(module: str) -> int:
    best, rank = None, -1
    for i, (_, prefixes) in enumerate(LAYERS):
        for p in prefixes:
            if (module == p or module.startswith(p + ".")) and len(p) > rank:
                best, rank = i, len(p)
    if best is None:
        raise AssertionError(f"module {module} belongs to no layer; add it to LAYERS in {__file__}")
    return best


def _modules() -> dict[str, tuple[pathlib.Path, bool]]:
    found = {}
    for folder, package in FOLDERS.items():
        for path in sorted((ROOT / folder).rglob("*.py")):
            parts = package.split(".") + list(path.relative_to(ROOT / folder).with_suffix("").parts)
            is_package = parts[-1] == "__init__"
            if is_package:
                parts = parts[:-1]
            found[".".join(parts)] = (path, is_package)
    return found


MODULES = _modules()


def imports_of(module: str) -> list[tuple[int, str, str | None]]:
    """(line, imported module, imported name or None) for every heatloom import of a module."""
    path, is_package = MODULES[module]
    package = module.split(".") if is_package else module.split(".")[:-1]
    out = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            out += [(node.lineno, a.name, None) for a in node.names if a.name.split(".")[0] == "heatloom"]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package[:len(package) - node.level + 1]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            if target.split(".")[0] != "heatloom":
                continue
            for a in node.names:
                sub = f"{target}.{a.name}"
                if sub in MODULES:  # `from package import module`
                    out.append((node.lineno, sub, None))
                else:
                    out.append((node.lineno, target, a.name))
    return out


def test_every_folder_is_found():
    assert {"heatloom.model", "heatloom.equipment", "heatloom.pinch.problem_table", "heatloom.network",
            "heatloom.retrofit", "heatloom.studies", "heatloom.io.tables", "heatloom.cli"} <= set(MODULES)


@pytest.mark.parametrize("module", sorted(MODULES))
def test_arrows_point_one_way(module):
    mine = _layer(module)
    wrong = []
    for line, target, name in imports_of(module):
        if _layer(target) > mine:
            wrong.append(f"line {line}: {target}{'.' + name if name else ''} "
                         f"({LAYERS[_layer(target)][0]} is below {LAYERS[mine][0]})")
        elif module in READERS and _layer(target) != 0 and target not in READERS:
            wrong.append(f"line {line}: {target} (a reader may use only the core and other readers)")
    assert not wrong, f"{module} imports against the layer order:\n" + "\n".join(wrong)


@pytest.mark.parametrize("module", sorted(MODULES))
def test_no_private_name_crosses_a_module(module):
    wrong = [f"line {line}: {target}.{name}" for line, target, name in imports_of(module)
             if name and name.startswith("_") and not name.startswith("__") and target != module]
    assert not wrong, f"{module} imports private names of other modules:\n" + "\n".join(wrong)


def test_the_check_sees_lazy_imports(tmp_path):
    # the AST pass must see an import inside a function: a regression here would let arrows back in
    source = "def f():\n    from ..network.design import design_mer\n    return design_mer\n"
    node = ast.parse(source)
    lazy = [n for n in ast.walk(node) if isinstance(n, ast.ImportFrom)]
    assert lazy and lazy[0].module == "network.design" and lazy[0].level == 2

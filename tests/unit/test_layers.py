"""The house's rules, read from the source (ast): imports run only down the layers.

Layers, bottom to top: ground (errors, units, materials, version) -> io -> physics -> geometry ->
validation -> measure -> batch -> gate -> output -> cli. A module may import from lower layers and
from its own subpackage; nothing imports the package root; there is no import loop; nothing
below the output layer prints, and nothing below the command line parses option text.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest
from paths import ROOT

PACKAGE = ROOT / "meshprops"
GROUND = {"errors", "units", "materials", "version"}
LAYERS = ["ground", "io", "physics", "geometry", "validation", "measure", "batch", "gate", "output", "cli"]
RANK = {name: rank for rank, name in enumerate(LAYERS)}


def _module_name(path: Path) -> str:
    parts = path.relative_to(ROOT).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


MODULES = {_module_name(p): p for p in sorted(PACKAGE.rglob("*.py"))}


def _layer(module: str) -> str | None:
    """Layer of ``meshprops.<first>...``; ``None`` for the package root and ``__main__``."""
    parts = module.split(".")
    if len(parts) == 1 or parts[1] == "__main__":
        return None
    return "ground" if parts[1] in GROUND else parts[1]


def _imports(module: str) -> list[tuple[str, int]]:
    """Every ``meshprops`` module imported anywhere in ``module`` (functions too), with line numbers."""
    path = MODULES[module]
    package = module if path.name == "__init__.py" else module.rsplit(".", 1)[0]
    found = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            found += [(alias.name, node.lineno) for alias in node.names if alias.name.split(".")[0] == "meshprops"]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - node.level + 1]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            if target.split(".")[0] != "meshprops":
                continue
            # "from package import submodule" imports the submodule
            subs = [f"{target}.{alias.name}" for alias in node.names if f"{target}.{alias.name}" in MODULES]
            found += [(name, node.lineno) for name in subs] or [(target, node.lineno)]
    return found


GRAPH = {module: sorted({name for name, _ in _imports(module) if name != module}) for module in MODULES}


def test_every_module_is_in_a_known_layer():
    unknown = [m for m in MODULES if _layer(m) is not None and _layer(m) not in RANK]
    assert unknown == []


@pytest.mark.parametrize("module", [m for m in MODULES if _layer(m) is not None])
def test_imports_run_only_down_the_layers(module):
    here = _layer(module)
    for name, line in _imports(module):
        assert name != "meshprops", f"{module} line {line} imports the package root"
        there = _layer(name)
        assert there is not None, f"{module} line {line} imports {name}"
        same_package = name.split(".")[:2] == module.split(".")[:2]
        assert RANK[there] < RANK[here] or (there == here and (same_package or here == "ground")), (
            f"{module} ({here}) line {line} imports {name} ({there}): imports must point down"
        )


def test_there_is_no_import_loop():
    state: dict[str, int] = {}
    stack: list[str] = []

    def visit(module: str) -> None:
        state[module] = 1
        stack.append(module)
        for name in GRAPH.get(module, ()):
            if name not in MODULES:
                continue
            if state.get(name) == 1:
                loop = stack[stack.index(name):] + [name]
                raise AssertionError("import loop: " + " -> ".join(loop))
            if name not in state:
                visit(name)
        stack.pop()
        state[module] = 2

    for module in MODULES:
        if module not in state and _layer(module) is not None:
            visit(module)


def _calls(module: str):
    for node in ast.walk(ast.parse(MODULES[module].read_text(encoding="utf-8"))):
        if isinstance(node, ast.Call):
            yield node


@pytest.mark.parametrize("module", [m for m in MODULES if _layer(m) not in (None, "output", "cli")])
def test_nothing_below_the_output_layer_prints(module):
    text = MODULES[module].read_text(encoding="utf-8")
    assert "sys.stdout" not in text and "sys.stderr" not in text, module
    printing = [n.lineno for n in _calls(module) if isinstance(n.func, ast.Name) and n.func.id == "print"]
    assert printing == [], f"{module} prints at lines {printing}"


@pytest.mark.parametrize("module", [m for m in MODULES if _layer(m) not in (None, "cli")])
def test_nothing_below_the_command_line_parses_option_text(module):
    """Option text such as "X,Y,Z" is split into values only in meshprops/cli/options.py."""
    splits = [
        n.lineno for n in _calls(module)
        if isinstance(n.func, ast.Attribute) and n.func.attr == "split"
        and n.args and isinstance(n.args[0], ast.Constant) and n.args[0].value == ","
    ]  # fmt: skip
    assert splits == [], f"{module} splits text on ',' at lines {splits}"


def test_the_rule_catches_an_upward_import(tmp_path):
    """The checker itself: an import from a higher layer is reported (a test that can fail)."""
    module = "meshprops.physics.mass"
    original = MODULES[module]
    fake = tmp_path / "mass.py"
    fake.write_text(original.read_text(encoding="utf-8") + "\nfrom ..output.serialize import body_to_dict\n")
    MODULES[module] = fake
    try:
        with pytest.raises(AssertionError, match="imports must point down"):
            test_imports_run_only_down_the_layers(module)
    finally:
        MODULES[module] = original

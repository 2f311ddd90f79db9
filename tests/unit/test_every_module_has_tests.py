"""Every library module has its own unit test file, at the path that mirrors the package.

``meshprops/<subpackage>/<module>.py`` -> ``tests/unit/<subpackage>/test_<module>.py``;
ground modules (``meshprops/<module>.py``) -> ``tests/unit/test_<module>.py``; command-line
modules (``meshprops/cli/<module>.py``) -> ``tests/cli/test_<module>.py``. ``__init__`` and
``__main__`` need none. A new module fails this test until its test file exists and holds
at least one test function (an empty placeholder file does not count).
"""

from __future__ import annotations

import ast
from pathlib import Path

from paths import ROOT, TESTS

PACKAGE = ROOT / "meshprops"
EXEMPT = {"__init__.py", "__main__.py"}


def expected_test_file(module: Path) -> Path:
    """Where the unit test file of ``module`` (a path under ``meshprops/``) belongs."""
    parts = module.relative_to(PACKAGE).parts
    name = f"test_{module.stem}.py"
    if parts[0] == "cli":
        return TESTS.joinpath("cli", *parts[1:-1], name)
    return TESTS.joinpath("unit", *parts[:-1], name)


def library_modules() -> list[Path]:
    return sorted(p for p in PACKAGE.rglob("*.py") if p.name not in EXEMPT)


def has_a_test(path: Path) -> bool:
    """Whether the file defines a ``test_*`` function (at module level or in a ``Test*`` class)."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    return any(
        isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)) and node.name.startswith("test")
        for node in ast.walk(tree)
    )


def test_the_mapping_follows_the_layout():
    # The rule itself, on three kinds of module, so that a broken mapping cannot pass vacuously.
    assert expected_test_file(PACKAGE / "units.py") == TESTS / "unit" / "test_units.py"
    assert expected_test_file(PACKAGE / "io" / "stl.py") == TESTS / "unit" / "io" / "test_stl.py"
    assert expected_test_file(PACKAGE / "cli" / "measure.py") == TESTS / "cli" / "test_measure.py"


def test_the_package_is_found():
    names = {p.relative_to(PACKAGE).as_posix() for p in library_modules()}
    assert {"errors.py", "io/mesh.py", "measure/body.py", "cli/app.py"} <= names
    assert not any(Path(n).name in EXEMPT for n in names)


def test_a_file_without_a_test_function_does_not_count(tmp_path):
    placeholder = tmp_path / "test_placeholder.py"
    placeholder.write_text('"""To do."""\nimport pytest\n\n\ndef helper():\n    pass\n', encoding="utf-8")
    assert not has_a_test(placeholder)
    placeholder.write_text("class TestThing:\n    def test_it(self):\n        assert 1\n", encoding="utf-8")
    assert has_a_test(placeholder)


def test_every_module_has_its_own_test_file():
    missing = [
        (module.relative_to(ROOT).as_posix(), expected_test_file(module).relative_to(ROOT).as_posix())
        for module in library_modules()
        if not (expected_test_file(module).is_file() and has_a_test(expected_test_file(module)))
    ]
    assert not missing, (
        f"{len(missing)} module(s) without their own unit test file (or one without a test function); "
        "add one at the path shown "
        "(tests mirror the package: tests/unit/<subpackage>/test_<module>.py, ground modules in "
        "tests/unit/, command-line modules in tests/cli/; a new test folder needs an empty __init__.py "
        "like its siblings, so that test files of the same name in two folders do not clash):\n"
        + "\n".join(f"  {module} -> create {test}" for module, test in missing)
    )

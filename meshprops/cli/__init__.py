"""The ``meshprops`` command line: one module per command, registered on one typer app.

Adding a command is one new module here and one name in the import below.
"""

from . import (  # noqa: F401  (importing a command registers it)
    balance,
    baseline,
    budget,
    check,
    fill_inertials,
    materials,
    measure,
    report,
)
from .app import app, main

__all__ = ["app", "main"]

"""The gate on a folder of CAD exports: configuration, baseline, mass budget, verdicts.

* :mod:`meshprops.gate.config` finds and checks ``meshprops.toml`` (or
  ``[tool.meshprops]`` in ``pyproject.toml``).
* :mod:`meshprops.gate.rules` turns a part's mass properties and the rules that
  cover it into :class:`~meshprops.gate.rules.Verdict` objects.
* :mod:`meshprops.gate.baseline` records content hashes and mass properties in
  ``meshprops-baseline.json`` and compares new measurements with them.
* :mod:`meshprops.gate.budget` rolls up a mass budget (maturity, growth
  allowance, allocations, margins).
"""

"""Every error survives pickling: a worker process returns it equal (message, exit code, fields)."""

from __future__ import annotations

import inspect
import pickle
from concurrent.futures import ProcessPoolExecutor

import pytest

from meshprops import errors
from meshprops.validation.findings import ERROR, Finding

ERROR_CLASSES = sorted(
    (cls for _, cls in inspect.getmembers(errors, inspect.isclass) if issubclass(cls, errors.MeshpropsError)),
    key=lambda cls: cls.__name__,
)

# One instance of each error, with every field set.
EXAMPLES = {
    "MeshpropsError": lambda: errors.MeshpropsError("something is wrong", source="part.stl"),
    "MeshFileError": lambda: errors.MeshFileError("part.stl", "binary STL truncated", offset=84),
    "UnitError": lambda: errors.UnitError("furlong", ("m", "mm"), source="part.stl"),
    "InputValueError": lambda: errors.InputValueError("--density", "a number > 0", -1.0, source="cli"),
    "InvalidMeshError": lambda: errors.InvalidMeshError(
        "part.stl", "invalid mesh: open_edges: 3 open edges", (Finding("open_edges", ERROR, 3, "3 open edges"),)
    ),
    "OutputFileError": lambda: errors.OutputFileError("out/report.json", "no such folder"),
    "PhysicsError": lambda: errors.PhysicsError("negative principal moment", source="part.stl"),
    "ModelFileError": lambda: errors.ModelFileError("arm.urdf", "mesh 'meshes/base.stl' not found", line=9),
    "NonFiniteResultError": lambda: errors.NonFiniteResultError(
        "mass", "mass properties overflow double precision (mass is not finite)", source="planet.stl"
    ),
    "ManifestError": lambda: errors.ManifestError("rover.toml", "body[2].material", "unknown material 'alu'", line=12),
    "SimulatorExportError": lambda: errors.SimulatorExportError("chassis: inertia tensor is not positive definite"),
    "MissingExtraError": lambda: errors.MissingExtraError("PNG pictures (--png) need matplotlib", "report"),
    "BatchRunError": lambda: errors.BatchRunError("cannot reach the Dask scheduler", source="tcp://127.0.0.1:8786"),
    "UnsentError": lambda: errors.UnsentError("part.stl: invalid mesh", 1),
    "ConfigError": lambda: errors.ConfigError("meshprops.toml", "rule[0].expected_mass", "expected a mass in kg", line=7),
    "BaselineError": lambda: errors.BaselineError("meshprops-baseline.json", "not a meshprops baseline"),
}


def _raise(name: str) -> None:
    raise EXAMPLES[name]()


def test_every_error_class_has_an_example():
    assert {cls.__name__ for cls in ERROR_CLASSES} == set(EXAMPLES)


def _same(found: errors.MeshpropsError, expected: errors.MeshpropsError) -> None:
    assert type(found) is type(expected)
    assert str(found) == str(expected)
    assert found.exit_code == expected.exit_code
    assert vars(found).keys() == vars(expected).keys()
    for key, value in vars(expected).items():
        if key == "findings":  # frozen dataclasses compare by identity (eq=False): compare their fields
            assert [(f.code, f.severity, f.count, f.message) for f in getattr(found, key)] == [
                (f.code, f.severity, f.count, f.message) for f in value
            ]
        else:
            assert getattr(found, key) == value


@pytest.mark.parametrize("name", sorted(EXAMPLES))
def test_pickle_round_trip_gives_an_equal_error(name):
    error = EXAMPLES[name]()
    _same(pickle.loads(pickle.dumps(error)), error)


def test_errors_raised_in_worker_processes_come_back_intact():
    with ProcessPoolExecutor(max_workers=2) as pool:
        futures = {name: pool.submit(_raise, name) for name in sorted(EXAMPLES)}
        for name, future in futures.items():
            found = future.exception(timeout=60)
            _same(found, EXAMPLES[name]())
            assert isinstance(found, errors.MeshpropsError)

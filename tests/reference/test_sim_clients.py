"""The rover's complete models, loaded by real simulator clients (the ``sim`` extra).

Each client computes the model's total mass, centre of mass and composite inertia itself,
from the links, joints and inertials it read; these must equal the assembly total of
``meshprops measure --json`` (the reference here is the meshprops document, and the clients
are outside the project: MuJoCo's MJCF and URDF compilers, Pinocchio's URDF parser and its
composite-rigid-body algorithm). Both clients are loaded with a free root joint, the way the
README tells users to load the model as a free body.

Composite inertia from a client's joint-space mass matrix (common practice): with a free
root joint whose frame is the assembly frame, the 3x3 rotational block is the inertia about
the root origin, so ``I_com = M_rot - m (|c|^2 E - c c^T)``.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

mujoco = pytest.importorskip("mujoco", reason="the sim extra is not installed (pip install '.[sim]')")
pinocchio = pytest.importorskip("pinocchio", reason="the sim extra is not installed (pip install '.[sim]')")

ROVER = Path(__file__).resolve().parents[2] / "sample_meshes" / "rover.toml"
TOLERANCE = 1e-9


def run_meshprops(*arguments) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "meshprops", *arguments], capture_output=True, text=True, check=False)


@pytest.fixture(scope="module")
def rover_total():
    result = run_meshprops("measure", str(ROVER), "--json")
    assert result.returncode == 0, result.stderr
    total = json.loads(result.stdout)["total"]
    return total["mass"], np.array(total["center_of_mass"]), np.array(total["inertia_about_com"])


@pytest.fixture(scope="module")
def models(tmp_path_factory):
    folder = tmp_path_factory.mktemp("rover_models")
    written = {}
    for file_format in ("urdf", "sdf", "mjcf"):
        for form in ("full", "principal"):
            out = folder / f"rover_{form}.{'xml' if file_format == 'mjcf' else file_format}"
            result = run_meshprops("measure", str(ROVER), "--format", file_format, "--inertial-form", form, "-o", str(out))
            assert result.returncode == 0, result.stderr
            written[file_format, form] = out
    return written


def about_com(mass, com, about_origin):
    return about_origin - mass * (com @ com * np.eye(3) - np.outer(com, com))


def assert_same_total(client, reference):
    mass, com, inertia = client
    ref_mass, ref_com, ref_inertia = reference
    assert abs(mass - ref_mass) <= TOLERANCE * ref_mass
    np.testing.assert_allclose(com, ref_com, rtol=0, atol=TOLERANCE * np.abs(ref_com).max())
    np.testing.assert_allclose(inertia, ref_inertia, rtol=0, atol=TOLERANCE * np.abs(ref_inertia).max())


def mujoco_total(path: Path):
    """MuJoCo (MJCF or URDF): the compiled model with a free joint added to the root body."""
    spec = mujoco.MjSpec.from_file(str(path))
    root = spec.worldbody.first_body()
    root.add_freejoint()
    model = spec.compile()
    data = mujoco.MjData(model)
    mujoco.mj_forward(model, data)
    matrix = np.zeros((model.nv, model.nv))
    mujoco.mj_fullM(model, data, matrix)
    mass = float(model.body_subtreemass[1])
    com = np.array(data.subtree_com[1])
    # free joint: translational dofs (world axes) then rotational (root axes, here the assembly's), about the root origin
    assert np.allclose(data.xpos[1], 0.0) and np.allclose(data.xmat[1], np.eye(3).ravel())
    return mass, com, about_com(mass, com, matrix[3:6, 3:6])


def pinocchio_total(path: Path):
    """Pinocchio (URDF) with a free-flyer root joint: total mass, centre of mass and CRBA mass matrix."""
    model = pinocchio.buildModelFromUrdf(str(path), pinocchio.JointModelFreeFlyer())
    data = model.createData()
    q = pinocchio.neutral(model)
    mass = float(pinocchio.computeTotalMass(model))
    com = np.array(pinocchio.centerOfMass(model, data, q))
    matrix = np.triu(pinocchio.crba(model, data, q))
    matrix = matrix + np.triu(matrix, 1).T
    geometry = pinocchio.buildGeomFromUrdf(model, str(path), pinocchio.GeometryType.COLLISION, package_dirs=[str(path.parent)])
    assert geometry.ngeoms == 13  # every mesh body's collision mesh was found and read
    return mass, com, about_com(mass, com, matrix[3:6, 3:6])


@pytest.mark.parametrize("form", ["full", "principal"])
def test_mujoco_reads_the_mjcf_model_with_the_assembly_total(models, rover_total, form):
    assert_same_total(mujoco_total(models["mjcf", form]), rover_total)


@pytest.mark.parametrize("form", ["full", "principal"])
def test_mujoco_reads_the_urdf_model_with_the_assembly_total(models, rover_total, form):
    assert_same_total(mujoco_total(models["urdf", form]), rover_total)


@pytest.mark.parametrize("form", ["full", "principal"])
def test_pinocchio_reads_the_urdf_model_with_the_assembly_total(models, rover_total, form):
    assert_same_total(pinocchio_total(models["urdf", form]), rover_total)


def test_mesh_copies_are_binary_stl_beside_the_model(models):
    folder = models["urdf", "full"].parent
    copies = sorted(path.name for path in folder.glob("*.stl"))
    # tyre.ply and motor_can.ply (PLY) and gimbal_arm.stl (ASCII STL) are copied; binary STL and OBJ are not.
    assert {"rover_full.tyre.stl", "rover_full.motor_can.stl", "rover_full.gimbal_arm.stl"} <= set(copies)
    for name in copies:
        data = (folder / name).read_bytes()
        assert len(data) == 84 + 50 * int.from_bytes(data[80:84], "little")  # binary STL layout (common practice)

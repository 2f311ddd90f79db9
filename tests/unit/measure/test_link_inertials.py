"""Placeholder detection and the per-link map of ``fill-inertials``.

A placeholder is an inertial no body of the link's mesh can have: an identity matrix, a zero
mass or tensor (common practice: the values model generators write when nothing is known), or
an equivalent uniform box larger than √3 times the mesh's extent (no mass within an extent e
has a coordinate variance above e²/4; the box of the same moments has variance a²/12).
"""

from __future__ import annotations

import numpy as np
import pytest

from meshprops.errors import ManifestError
from meshprops.geometry import shapes
from meshprops.io.writers import write_binary_stl
from meshprops.measure.link_inertials import fill_model, load_link_map


def model_with(tmp_path, inertial: str) -> str:
    vertices, faces = shapes.box((100.0, 50.0, 20.0))
    write_binary_stl(tmp_path / "part.stl", np.asarray(vertices)[np.asarray(faces)])
    path = tmp_path / "part.urdf"
    path.write_text(
        f'<robot name="r"><link name="part">{inertial}'
        '<collision><geometry><mesh filename="part.stl" scale="0.001 0.001 0.001"/></geometry></collision>'
        "</link></robot>"
    )
    return path


def inertial(mass, ixx, iyy, izz):
    return (f'<inertial><origin xyz="0 0 0"/><mass value="{mass}"/>'
            f'<inertia ixx="{ixx}" ixy="0" ixz="0" iyy="{iyy}" iyz="0" izz="{izz}"/></inertial>')  # fmt: skip


@pytest.mark.parametrize(
    "text, called",
    [
        (inertial(1, 1, 1, 1), "identity inertia matrix"),
        (inertial(0, 0, 0, 0), "mass 0.0 kg"),
        (inertial(0.3, 0, 0, 0), "zero inertia tensor"),
        # 0.27 kg box of 0.1 x 0.05 x 0.02 m would have Izz = m (a² + b²) / 12 = 2.8e-4; 100x that is no box of this mesh
        (inertial(0.27, 0.0065, 0.0230, 0.0281), "a box far larger than the mesh"),
    ],
)
def test_placeholders_are_called_out(tmp_path, text, called):
    (item,) = fill_model(model_with(tmp_path, text), density=2700.0).links
    assert item.status == "filled" and item.placeholder is not None and item.placeholder.startswith(called)


def test_a_plausible_old_inertial_is_not_a_placeholder(tmp_path):
    m = 2700.0 * 0.1 * 0.05 * 0.02  # the handbook cuboid itself, slightly off
    a, b, c = 0.1, 0.05, 0.02
    text = inertial(m * 1.05, m * (b * b + c * c) / 12, m * (a * a + c * c) / 12, m * (a * a + b * b) / 12)
    (item,) = fill_model(model_with(tmp_path, text), density=2700.0).links
    assert item.placeholder is None
    assert item.new.mass == pytest.approx(m, rel=1e-12)


def test_map_measured_mass_and_material(tmp_path):
    path = model_with(tmp_path, "")
    (tmp_path / "map.toml").write_text('[link.part]\nmeasured_mass = 0.5\n')
    (item,) = fill_model(path, link_map=load_link_map(tmp_path / "map.toml")).links
    assert item.new.mass == 0.5 and item.density_basis == "measured_mass"
    assert item.density == pytest.approx(0.5 / 1e-4, rel=1e-12)
    (tmp_path / "map.toml").write_text('[materials]\nfoam = { density = 30 }\n[link.part]\nmaterial = "foam"\n')
    (item,) = fill_model(path, link_map=load_link_map(tmp_path / "map.toml")).links
    assert item.new.mass == pytest.approx(30 * 1e-4, rel=1e-12) and item.density_basis == "map_material"


@pytest.mark.parametrize(
    "text, key",
    [
        ("[link.part]\ndensity = 1000\nmaterial = 'pla'\n", "link.part"),
        ("[link.part]\nmass = 1\n", "link.part.mass"),
        ("[link.part]\ndensity = -3\n", "link.part.density"),
        ("[links.part]\ndensity = 3\n", "links"),
        ("[link.part\n", None),
    ],
)
def test_bad_maps_name_the_key(tmp_path, text, key):
    (tmp_path / "map.toml").write_text(text)
    with pytest.raises(ManifestError) as raised:
        load_link_map(tmp_path / "map.toml")
    assert raised.value.key == key


def test_geometry_that_is_not_a_mesh_is_said_to_be_left_out(tmp_path):
    from meshprops.output.fill_report import fill_table, fill_to_dict

    path = model_with(tmp_path, "")
    text = path.read_text().replace("</link>", '<collision><geometry><box size="0.1 0.1 0.1"/></geometry></collision></link>')
    path.write_text(text)
    fill = fill_model(path, density=1000.0)
    assert fill.links[0].link.ignored_geometry == 1
    assert "part: 1 collision geometry that is not a mesh (box, cylinder, ...) is not counted" in fill_table(fill_to_dict(fill))

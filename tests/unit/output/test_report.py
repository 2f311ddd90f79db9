"""meshprops.output.report: findings located on the full mesh, and the PNG files."""

from __future__ import annotations

import numpy as np
import trimesh

from meshprops.geometry import shapes
from meshprops.io import mesh_from_triangles
from meshprops.measure.body import measure_mesh
from meshprops.output.report import finding_place, write_pngs


def _open_box():
    vertices, faces = shapes.box((0.04, 0.03, 0.02))
    removed = faces[7]
    triangles = shapes.triangles_of(vertices, np.delete(faces, 7, axis=0))
    return mesh_from_triangles(triangles, length_unit="m"), vertices[removed]


def test_open_edges_are_located_on_every_face_and_edge_beside_the_hole():
    mesh, hole = _open_box()
    body = measure_mesh(mesh, on_invalid="report")
    finding = [f for f in body.findings if f.code == "open_edges"][0]
    place = finding_place(mesh, finding)
    # trimesh on the same triangles: faces beside edges that only one face uses.
    reference = trimesh.Trimesh(vertices=mesh.triangles().reshape(-1, 3), faces=np.arange(3 * mesh.face_count).reshape(-1, 3), process=False)
    reference.merge_vertices()
    single = trimesh.grouping.group_rows(reference.edges_sorted, require_count=1)
    assert sorted(place.faces.tolist()) == sorted(np.unique(reference.edges_face[single]).tolist())
    # The open edges are the three edges of the removed face (by construction).
    expected = {frozenset(map(tuple, pair)) for pair in ((hole[0], hole[1]), (hole[1], hole[2]), (hole[2], hole[0]))}
    found = {frozenset(map(tuple, edge)) for edge in place.edges}
    assert found == expected


def test_a_finding_without_a_known_place_keeps_its_examples():
    from meshprops.validation.findings import WARNING, Finding

    mesh, _ = _open_box()
    finding = Finding("collapsed_faces", WARNING, 1, "one", ({"face": 4, "point": [0.0, 0.0, 0.0]},))
    place = finding_place(mesh, finding)
    assert place.faces.tolist() == [4] and place.edges.shape == (0, 2, 3)


def test_pngs_are_written_for_every_view(tmp_path):
    from meshprops.output.drawing import BodyPicture, Picture, draw_views

    mesh, _ = _open_box()
    scenes = draw_views(Picture((BodyPicture("box", mesh.triangles(), None, closed=False),)))
    written = write_pngs(scenes, str(tmp_path / "out"), "box")
    assert [p.rsplit("/", 1)[-1] for p in written] == ["box-above.png", "box-front.png", "box-right.png", "box-oblique.png"]
    assert all(open(p, "rb").read(8) == b"\x89PNG\r\n\x1a\n" for p in written)

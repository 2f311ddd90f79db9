"""Loaders: every format gives the same solid; format told by content; every bad input is a clear error."""

from __future__ import annotations

import struct

import numpy as np
import pytest

from meshprops import MeshFileError, MeshpropsError, UnitError, load_mesh, measure_mesh
from meshprops.geometry import shapes
from meshprops.io import mesh_from_arrays, mesh_from_triangles, writers
from meshprops.physics.moments import integrate_chunks


def _properties(mesh, density=1000.0):
    return measure_mesh(mesh, density=density).properties


# ---------------------------------------------------------------------------- every format, same numbers


def test_every_format_gives_the_same_mass_properties(tmp_path, write_mesh, mesh_format, part, close):
    vertices, faces = part
    reference = _properties(mesh_from_arrays(vertices, faces))
    path = write_mesh(tmp_path, "bracket", vertices, faces, mesh_format)
    mesh = load_mesh(path, "m")
    assert mesh.file_format == mesh_format.removesuffix("-big-endian")
    assert mesh.face_count == len(faces)
    measured = _properties(mesh)
    # Coordinates are multiples of 1/8, exact in float32, so every format holds the same solid.
    assert measured.volume == pytest.approx(reference.volume, rel=1e-13)
    # Hand check of the volume: L profile 6 x 2 thick + boss 1 x 0.75 x 1.25.
    assert measured.volume == pytest.approx(6.0 * 2.0 + 1.0 * 0.75 * 1.25, rel=1e-13)
    close(measured.center_of_mass, reference.center_of_mass, 1e-13)
    close(measured.inertia_about_com, reference.inertia_about_com, 1e-12)


def test_binary_stl_is_a_read_only_memory_map_read_in_chunks(tmp_path, write_mesh, part):
    vertices, faces = part
    path = write_mesh(tmp_path, "bracket", vertices, faces, "stl-binary")
    mesh = load_mesh(path, "m")
    assert isinstance(mesh.soup.base, np.memmap) or isinstance(mesh.soup, np.memmap)
    assert not mesh.soup.flags.writeable
    chunks = list(mesh.triangle_chunks(chunk_faces=5))
    assert all(len(chunk) <= 5 for chunk in chunks)
    assert all(chunk.dtype == np.float64 for chunk in chunks)
    np.testing.assert_array_equal(np.concatenate(chunks), shapes.triangles_of(vertices, faces))
    whole = integrate_chunks(mesh.triangle_chunks())
    pieces = integrate_chunks(mesh.triangle_chunks(chunk_faces=5))
    assert pieces.volume == pytest.approx(whole.volume, rel=1e-14)


def test_binary_stl_whose_header_begins_with_solid(tmp_path, part):
    # Several CAD exporters write "solid <name>" into a binary header (common practice):
    # the size check, not the first word, decides.
    vertices, faces = part
    path = tmp_path / "header.stl"
    writers.write_binary_stl(path, shapes.triangles_of(vertices, faces), header=b"solid bracket exported as binary")
    mesh = load_mesh(path, "m")
    assert mesh.file_format == "stl-binary"
    assert mesh.face_count == len(faces)


@pytest.mark.parametrize(
    ("file_format", "name", "reported"),
    [
        ("stl-binary", "part.dat", "stl-binary"),
        ("stl-ascii", "part.obj", "stl-ascii"),
        ("obj", "part.txt", "obj"),
        ("ply-binary", "part.stl", "ply-binary"),
        ("ply-ascii", "part", "ply-ascii"),
    ],
)
def test_format_is_told_by_content_not_extension(tmp_path, write_mesh, part, file_format, name, reported):
    vertices, faces = part
    written = write_mesh(tmp_path, "x", vertices, faces, file_format)
    renamed = written.rename(tmp_path / name)
    mesh = load_mesh(renamed, "m")
    assert mesh.file_format == reported
    assert _properties(mesh).volume == pytest.approx(12.9375, rel=1e-13)


# ---------------------------------------------------------------------------- STL details


def test_ascii_stl_tolerates_case_whitespace_crlf_exponents_and_several_solids(tmp_path):
    triangles = shapes.triangles_of(*shapes.box((2.0, 3.0, 4.0)))
    lines = []
    for number, half in enumerate((triangles[:6], triangles[6:])):
        lines.append(f"SOLID half{number}")
        for corners in half:
            lines.append("   FACET NORMAL 0 0 0")
            lines.append("\tOUTER LOOP")
            for corner in corners:
                lines.append("      VERTEX " + " ".join(f"{value:.6e}" for value in corner))
            lines.append("    ENDLOOP")
            lines.append("ENDFACET")
        lines.append(f"ENDSOLID half{number}")
        lines.append("")
    path = tmp_path / "box.stl"
    path.write_bytes("\r\n".join(lines).encode("ascii"))
    mesh = load_mesh(path, "m")
    assert mesh.file_format == "stl-ascii"
    assert mesh.face_count == 12
    assert _properties(mesh).volume == pytest.approx(24.0, rel=1e-14)


# ---------------------------------------------------------------------------- OBJ details


def _hexagonal_prism_obj(face_style: str) -> str:
    """A regular hexagonal prism with hexagon caps and quad sides (polygons, not triangles)."""
    angles = np.arange(6) * np.pi / 3.0
    lines = ["# hexagonal prism", "mtllib nothing.mtl", "o prism", "s off"]
    for z in (0.0, 1.0):
        lines += [f"v {float(np.cos(a))!r} {float(np.sin(a))!r} {z!r}" for a in angles]
    lines += ["vt 0 0", "vt 1 0", "vt 1 1", "vn 0 0 1"]

    def corner(index):  # 1-based vertex index in the chosen style
        return {"plain": f"{index}", "vt": f"{index}/1", "vt-vn": f"{index}/2/1", "vn": f"{index}//1"}[face_style]

    lines.append("usemtl steel")
    lines.append("f " + " ".join(corner(i) for i in (6, 5, 4, 3, 2, 1)))  # bottom, seen from below
    lines.append("f " + " ".join(corner(i) for i in (7, 8, 9, 10, 11, 12)))  # top
    for k in range(6):
        k1 = (k + 1) % 6
        lines.append(f"f {corner(k + 1)} {corner(k1 + 1)} {corner(k1 + 7)} {corner(k + 7)}")
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize("face_style", ["plain", "vt", "vt-vn", "vn"])
def test_obj_polygons_are_fan_triangulated_in_every_index_form(tmp_path, face_style):
    path = tmp_path / "prism.obj"
    path.write_text(_hexagonal_prism_obj(face_style))
    mesh = load_mesh(path, "m")
    # Two hexagons (4 triangles each) + six quads (2 each).
    assert mesh.face_count == 2 * 4 + 6 * 2
    # Regular hexagon of circumradius 1: area 3*sqrt(3)/2 (elementary geometry), height 1.
    assert _properties(mesh).volume == pytest.approx(1.5 * np.sqrt(3.0), rel=1e-13)


def test_obj_negative_indices_and_several_objects(tmp_path):
    first = shapes.box((1.0, 1.0, 1.0), (0.0, 0.0, 0.0))
    second = shapes.box((1.0, 2.0, 3.0), (5.0, 0.0, 0.0))
    lines = []
    for name, (vertices, faces) in (("first", first), ("second", second)):
        lines.append(f"o {name}")
        lines.append(f"g {name}_group")
        lines += ["v {!r} {!r} {!r} 1.0".format(*map(float, v)) for v in vertices]  # optional w coordinate
        # Relative (negative) indices count back from the latest vertex.
        lines += ["f " + " ".join(str(int(i) - len(vertices)) for i in face) for face in faces]
    path = tmp_path / "two.obj"
    path.write_text("\n".join(lines) + "\n")
    mesh = load_mesh(path, "m")
    assert mesh.face_count == 24
    properties = _properties(mesh)
    assert properties.volume == pytest.approx(1.0 + 6.0, rel=1e-14)
    # Centre of mass of the two shells: volumes 1 at x = 0 and 6 at x = 5.
    np.testing.assert_allclose(properties.center_of_mass, [30.0 / 7.0, 0.0, 0.0], atol=1e-13)


def test_obj_vertex_colours_are_ignored(tmp_path):
    vertices, faces = shapes.box((1.0, 2.0, 3.0))
    lines = ["v {!r} {!r} {!r} 0.5 0.5 0.5".format(*map(float, v)) for v in vertices]
    lines += ["f {} {} {}".format(*(face + 1)) for face in faces]
    path = tmp_path / "colour.obj"
    path.write_text("\n".join(lines) + "\n")
    assert _properties(load_mesh(path, "m")).volume == pytest.approx(6.0, rel=1e-14)


# ---------------------------------------------------------------------------- PLY details


def test_ply_with_quads_ragged_lists_extra_properties_and_elements(tmp_path):
    vertices, _ = shapes.box((2.0, 2.0, 2.0))
    quads = [[0, 3, 2, 1], [4, 5, 6, 7], [0, 1, 5, 4], [2, 3, 7, 6], [1, 2, 6, 5], [3, 0, 4, 7]]
    header = [
        "ply",
        "format ascii 1.0",
        "comment desk-top rover test part",
        f"element vertex {len(vertices)}",
        "property float x",
        "property float y",
        "property float z",
        "property float nx",
        "property float ny",
        "property float nz",
        "property uchar red",
        "element face 7",
        "property uchar flags",
        "property list uchar int vertex_indices",
        "element edge 1",
        "property int vertex1",
        "property int vertex2",
        "end_header",
    ]
    body = ["{!r} {!r} {!r} 0 0 1 255".format(*map(float, v)) for v in vertices]
    # The first quad split into two triangles: the face lists are ragged (3 and 4 corners).
    body.append("0 3 0 3 2")
    body.append("0 3 0 2 1")
    body += ["0 4 " + " ".join(map(str, q)) for q in quads[1:]]
    body.append("0 1")
    path = tmp_path / "box.ply"
    path.write_text("\n".join(header + body) + "\n")
    mesh = load_mesh(path, "m")
    assert mesh.face_count == 2 + 5 * 2
    assert _properties(mesh).volume == pytest.approx(8.0, rel=1e-14)


@pytest.mark.parametrize("order", ["<", ">"])
def test_binary_ply_float32_with_ragged_lists_both_byte_orders(tmp_path, order):
    vertices, faces = shapes.box((1.0, 2.0, 4.0))
    encoding = "binary_little_endian" if order == "<" else "binary_big_endian"
    header = (
        f"ply\nformat {encoding} 1.0\nelement vertex 8\nproperty float x\nproperty float y\nproperty float z\n"
        "element face 11\nproperty list uchar uint vertex_indices\nend_header\n"
    ).encode("ascii")
    body = vertices.astype(order + "f4").tobytes()
    # One quad (faces 0 and 1 share the z = -c side) and ten triangles: ragged lists.
    body += struct.pack(order + "B4I", 4, 0, 3, 2, 1)
    for face in faces[2:]:
        body += struct.pack(order + "B3I", 3, *face)
    path = tmp_path / "box.ply"
    path.write_bytes(header + body)
    mesh = load_mesh(path, "m")
    assert mesh.face_count == 12
    assert _properties(mesh).volume == pytest.approx(8.0, rel=1e-14)


# ---------------------------------------------------------------------------- units at load


def test_length_unit_is_applied_once_at_load(tmp_path, write_mesh):
    vertices, faces = shapes.box((10.0, 20.0, 30.0), (100.0, 0.0, 0.0))
    path = write_mesh(tmp_path, "box", vertices, faces, "obj")
    mesh = load_mesh(path, "mm")
    assert mesh.length_unit == "mm"
    np.testing.assert_allclose(mesh.triangles(), shapes.triangles_of(vertices, faces) * 1e-3, rtol=1e-15)
    properties = _properties(mesh, density=2700.0)
    # 10 x 20 x 30 mm of aluminium-like density: 6000 mm^3 = 6e-6 m^3.
    assert properties.volume == pytest.approx(6e-6, rel=1e-13)
    assert properties.mass == pytest.approx(2700.0 * 6e-6, rel=1e-13)
    np.testing.assert_allclose(properties.center_of_mass, [0.1, 0.0, 0.0], atol=1e-15)


def test_in_memory_constructors():
    vertices, faces = shapes.box((1.0, 2.0, 3.0))
    assert _properties(mesh_from_triangles(shapes.triangles_of(vertices, faces))).volume == pytest.approx(6.0)
    with pytest.raises(MeshFileError, match="shape"):
        mesh_from_triangles(np.zeros((4, 3)))
    with pytest.raises(MeshFileError, match="out of range"):
        mesh_from_arrays(vertices, faces + 1)
    with pytest.raises(MeshFileError, match="integer faces"):
        mesh_from_arrays(vertices, faces.astype(float))


# ---------------------------------------------------------------------------- bad input


def _box_stl_bytes() -> bytes:
    triangles = shapes.triangles_of(*shapes.box((1.0, 1.0, 1.0)))
    records = np.zeros(len(triangles), dtype=[("n", "<f4", 3), ("v", "<f4", (3, 3)), ("a", "<u2")])
    records["v"] = triangles
    return b"binary".ljust(80, b" ") + struct.pack("<I", len(triangles)) + records.tobytes()


def _expect_file_error(path, match, unit="m"):
    with pytest.raises(MeshFileError, match=match) as caught:
        load_mesh(path, unit)
    error = caught.value
    # Every loader error is a MeshpropsError, a ValueError, names the file and is one line.
    assert isinstance(error, MeshpropsError) and isinstance(error, ValueError)
    assert str(path) in str(error)
    assert "\n" not in str(error)
    return error


def test_missing_file(tmp_path):
    _expect_file_error(tmp_path / "nowhere.stl", "no such file")


def test_directory_instead_of_file(tmp_path):
    _expect_file_error(tmp_path, "directory")


def test_empty_file(tmp_path):
    path = tmp_path / "empty.stl"
    path.write_bytes(b"")
    _expect_file_error(path, "empty")


def test_truncated_binary_stl(tmp_path):
    path = tmp_path / "cut.stl"
    path.write_bytes(_box_stl_bytes()[:-7])
    error = _expect_file_error(path, "truncated")
    assert "12 triangles" in str(error)


def test_binary_stl_with_trailing_bytes(tmp_path):
    path = tmp_path / "long.stl"
    path.write_bytes(_box_stl_bytes() + b"\0" * 3)
    _expect_file_error(path, "trailing bytes")


def test_binary_stl_shorter_than_its_header(tmp_path):
    path = tmp_path / "short.stl"
    path.write_bytes(b"\x01\x02\x03")
    _expect_file_error(path, "shorter than the 84-byte header")


def test_binary_stl_without_triangles(tmp_path):
    path = tmp_path / "none.stl"
    path.write_bytes(b"\0" * 80 + struct.pack("<I", 0))
    _expect_file_error(path, "no triangles")


def test_unrecognised_bytes(tmp_path):
    path = tmp_path / "noise.dat"
    path.write_bytes(bytes(range(256)) * 3)
    _expect_file_error(path, "unrecognised mesh format")


_GOOD_FACET = "facet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 1 0 0\nvertex 0 1 0\nendloop\nendfacet\n"


@pytest.mark.parametrize(
    ("text", "match"),
    [
        ("solid a\n" + _GOOD_FACET, "missing 'endsolid'"),
        ("solid a\n" + _GOOD_FACET.replace("vertex 1 0 0", "vertex 1 zero 0") + "endsolid a\n", "'zero' is not a number"),
        (
            "solid a\n" + _GOOD_FACET.replace("vertex 1 0 0", "vertex 1 0") + "endsolid a\n",
            "line 5: expected 'vertex X Y Z'",
        ),
        ("solid a\n" + _GOOD_FACET.replace("endloop", "vertex 1 1 0\nendloop") + "endsolid a\n", "more than three"),
        ("solid a\n" + _GOOD_FACET.replace("vertex 0 1 0\n", "") + "endsolid a\n", "2 vertices, expected 3"),
        ("solid a\n" + _GOOD_FACET.replace("outer loop", "loop") + "endsolid a\n", "expected 'outer loop'"),
        ("solid a\n" + _GOOD_FACET.replace("endfacet", "endface") + "endsolid a\n", "expected 'endfacet'"),
        ("solid a\nfacet\n", "expected 'facet normal NX NY NZ'"),
        ("solid a\nhello\n", "expected 'facet' or 'endsolid'"),
    ],
)
def test_malformed_ascii_stl(tmp_path, text, match):
    path = tmp_path / "bad.stl"
    path.write_text(text)
    _expect_file_error(path, match)


def test_ascii_stl_with_a_non_ascii_byte_in_a_number(tmp_path):
    path = tmp_path / "bad.stl"
    path.write_bytes(("solid a\n" + _GOOD_FACET + "endsolid a\n").encode("ascii").replace(b"vertex 1", b"vertex \xb51"))
    _expect_file_error(path, "is not a number")


def test_ascii_stl_with_a_utf8_solid_name(tmp_path):
    # CAD exporters write the part name after 'solid'; a non-ASCII name must not make the
    # file look like a (truncated) binary STL.
    path = tmp_path / "named.stl"
    writers.write_ascii_stl(path, shapes.triangles_of(*shapes.box((1.0, 2.0, 3.0))), name="part")
    path.write_bytes(path.read_bytes().replace(b"solid part", "solid Bügel-Halter".encode("utf-8")))
    mesh = load_mesh(path, "m")
    assert mesh.file_format == "stl-ascii"
    assert _properties(mesh).volume == pytest.approx(6.0, rel=1e-14)


_TETRAHEDRON_VERTICES = "v 0 0 0\nv 1 0 0\nv 0 1 0\nv 0 0 1\n"


@pytest.mark.parametrize(
    ("text", "match"),
    [
        (_TETRAHEDRON_VERTICES + "f 1 3 2\nf 1 2 5\n", "line 6: face index '5' refers to a vertex not defined"),
        (_TETRAHEDRON_VERTICES + "f 1 3 2\nf 1 2 -5\n", "face index '-5' refers to a vertex"),
        (_TETRAHEDRON_VERTICES + "f 0 3 2\n", "face index 0"),
        (_TETRAHEDRON_VERTICES + "f 1 3 two\n", "'two' is not an integer"),
        (_TETRAHEDRON_VERTICES + "f 1 3\n", "face has 2 vertices"),
        ("f 1 2 3\n" + _TETRAHEDRON_VERTICES, "not defined before it"),
        ("v 0 0\n", "expected 'v X Y Z', found 2 values"),
        ("v 0 0 zero\n", "'zero' is not a number"),
        (_TETRAHEDRON_VERTICES + "curv 1 2\n", "unknown OBJ statement 'curv'"),
        (_TETRAHEDRON_VERTICES, "holds no faces"),
    ],
)
def test_malformed_obj(tmp_path, text, match):
    path = tmp_path / "bad.obj"
    path.write_text(text)
    _expect_file_error(path, match)


def test_obj_that_is_not_utf8(tmp_path):
    path = tmp_path / "bad.obj"
    path.write_bytes(b"v 0 0 0\nv 1 0 0\nv 0 1 0\n# caf\xe9\nf 1 2 3\n")
    _expect_file_error(path, "not UTF-8")


def _ply(body: bytes, header_lines: list[str], encoding="ascii") -> bytes:
    header = ["ply", f"format {encoding} 1.0", *header_lines, "end_header"]
    return ("\n".join(header) + "\n").encode("ascii") + body


_PLY_HEADER = ["element vertex 4", "property float x", "property float y", "property float z",
               "element face 4", "property list uchar int vertex_indices"]  # fmt: skip
_PLY_BODY = b"0 0 0\n1 0 0\n0 1 0\n0 0 1\n3 0 2 1\n3 0 1 3\n3 0 3 2\n3 1 2 3\n"


@pytest.mark.parametrize(
    ("data", "match"),
    [
        (b"ply\nformat ascii 1.0\nelement vertex 0\n", "no 'end_header'"),
        (_ply(_PLY_BODY, _PLY_HEADER, encoding="binary_middle_endian"), "unsupported PLY format"),
        (_ply(_PLY_BODY, _PLY_HEADER[:4]), "needs a 'vertex' and a 'face' element"),
        (_ply(_PLY_BODY[:-8], _PLY_HEADER), "ends inside element 'face'"),
        (_ply(_PLY_BODY + b"7\n", _PLY_HEADER), "1 values beyond its elements"),
        (_ply(_PLY_BODY.replace(b"3 1 2 3", b"3 1 2 9"), _PLY_HEADER), "face index out of range"),
        (_ply(_PLY_BODY.replace(b"0 0 1\n3", b"0 0 one\n3"), _PLY_HEADER), "'one' is not a number"),
        (_ply(_PLY_BODY, ["property float x", *_PLY_HEADER]), "property before any element"),
        (_ply(_PLY_BODY, [*_PLY_HEADER[:3], "property quaternion z", *_PLY_HEADER[4:]]), "bad PLY property line"),
        (_ply(_PLY_BODY, ["element vertex four", *_PLY_HEADER[1:]]), "expected 'element NAME COUNT'"),
        (_ply(_PLY_BODY, [*_PLY_HEADER[:5], "property list uchar int corners"]), "lacks a 'vertex_indices' list"),
    ],
)
def test_malformed_ply(tmp_path, data, match):
    path = tmp_path / "bad.ply"
    path.write_bytes(data)
    _expect_file_error(path, match)


def test_truncated_binary_ply(tmp_path, write_mesh):
    path = write_mesh(tmp_path, "box", *shapes.box(), "ply-binary")
    path.write_bytes(path.read_bytes()[:-5])
    _expect_file_error(path, "truncated inside element 'face'")


def test_binary_ply_with_trailing_bytes(tmp_path, write_mesh):
    path = write_mesh(tmp_path, "box", *shapes.box(), "ply-binary")
    path.write_bytes(path.read_bytes() + b"\0\0")
    _expect_file_error(path, "2 bytes beyond its elements")


@pytest.mark.parametrize("bad_value", [np.nan, np.inf, -np.inf])
def test_non_finite_coordinates_in_every_format(tmp_path, write_mesh, mesh_format, bad_value):
    vertices, faces = shapes.box((1.0, 2.0, 3.0))
    vertices = vertices.copy()
    vertices[5, 1] = bad_value
    with np.errstate(invalid="ignore"):  # the STL writers' facet normals of a non-finite corner
        path = write_mesh(tmp_path, "bad", vertices, faces, mesh_format)
    _expect_file_error(path, "NaN or infinite coordinate")


def test_unknown_unit(tmp_path, write_mesh):
    path = write_mesh(tmp_path, "box", *shapes.box(), "obj")
    with pytest.raises(UnitError, match="unknown unit 'furlong'; expected one of m, cm, mm, in, ft") as caught:
        load_mesh(path, "furlong")
    assert isinstance(caught.value, ValueError)


# ---------------------------------------------------------------------------- shipped bytes (--ship-content)


def test_bytes_read_as_the_file_in_every_format(tmp_path, write_mesh, mesh_format, part):
    from meshprops.io.loaders import load_mesh_content

    path = write_mesh(tmp_path, "bracket", *part, mesh_format)
    from_file = load_mesh(path, "mm")
    shipped = load_mesh_content(path.read_bytes(), str(path), "mm")
    assert (shipped.source, shipped.file_format, shipped.face_count) == (str(path), from_file.file_format, from_file.face_count)
    # the same triangles, bit for bit, so every result computed from them is the same
    np.testing.assert_array_equal(np.concatenate(list(shipped.triangle_chunks())), np.concatenate(list(from_file.triangle_chunks())))


@pytest.mark.parametrize("damage", ["empty", "truncated", "garbage"])
def test_bad_bytes_give_the_same_error_naming_the_file(tmp_path, damage):
    from meshprops.io.loaders import load_mesh_content

    path = tmp_path / "part.stl"
    writers.write_binary_stl(path, shapes.triangles_of(*shapes.box()))
    data = path.read_bytes()
    data = {"empty": b"", "truncated": data[:-7], "garbage": b"\x07" * 90}[damage]
    path.write_bytes(data)
    with pytest.raises(MeshFileError) as from_file:
        load_mesh(path)
    with pytest.raises(MeshFileError) as shipped:
        load_mesh_content(data, str(path))
    assert str(shipped.value) == str(from_file.value) and str(path) in str(shipped.value)

"""Broken (and a few sound) meshes for the validation and repair tests, built from
:mod:`meshprops.geometry.shapes` boxes so that every expected number has a closed form.

Each :class:`Case` says what ``measure`` (fast checks) and ``check`` (every check)
must find, at which faces, and what the mass properties are after ``--repair``.
Sizes are millimetres; the scenario is our lab's desk-top rover and camera gimbal.

Run ``python tests/meshes/catalogue.py`` to rewrite the example folders
``tests/meshes/valid``, ``warnings`` and ``invalid`` (one OBJ and one binary STL per
case; the file name starts with the finding code expected, ``CODE__name.ext``).
Adding a file there adds a test (``tests/test_checks.py::test_example_folder``).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from meshprops.geometry import shapes
from meshprops.io import writers


@dataclass(frozen=True)
class Box:
    """A solid box (sign +1) or a box-shaped void (sign -1): size (a, b, c) and centre, mm."""

    size: tuple[float, float, float]
    center: tuple[float, float, float] = (0.0, 0.0, 0.0)
    sign: int = 1


@dataclass(frozen=True)
class Case:
    """One fixture mesh and what validation and repair must say about it.

    Attributes
    ----------
    name : file stem
    vertices, faces : the indexed mesh, millimetres
    folder : ``valid`` (no finding at all in ``check``), ``warnings`` or ``invalid``
    measure_codes : finding codes ``measure`` (fast checks) must report, in any order
    check_codes : finding codes ``check`` (thorough) must report
    where : for some codes, the exact set of face indices the finding must point at
    repaired_codes : codes still reported after ``--repair`` (errors that cannot be repaired)
    repair_codes : the ``repaired_*`` codes ``--repair`` must report
    solid : the boxes making up the correct solid (after repair), for the closed-form check
    """

    name: str
    vertices: np.ndarray
    faces: np.ndarray
    folder: str
    measure_codes: tuple[str, ...]
    check_codes: tuple[str, ...]
    where: dict = field(default_factory=dict)
    repaired_codes: tuple[str, ...] = ()
    repair_codes: tuple[str, ...] = ()
    solid: tuple[Box, ...] = ()
    length_unit: str = "mm"


PLATE = (120.0, 80.0, 40.0)  # the rover's chassis plate
RING = ((60.0, 60.0, 60.0), (40.0, 40.0, 40.0))  # gimbal block and its cavity


def _plate():
    return shapes.box(PLATE)


def _sliver_t_junction():
    """A plate whose face 2 is split at the midpoint m of its edge (a, b), the T-junction
    closed by the zero-area sliver (m, a, b) — a common CAD export artefact."""
    vertices, faces = _plate()
    a, b, c = faces[2]
    midpoint = (vertices[a] + vertices[b]) / 2.0
    m = len(vertices)
    vertices = np.vstack([vertices, midpoint])
    faces = np.vstack([np.delete(faces, 2, axis=0), [[a, m, c], [m, b, c], [m, a, b]]])
    return vertices, faces  # the sliver is the last face, 13


def _bow_tie():
    """A plate whose top four corners are mirrored in x: the two x-faces cross each other
    in the middle like a bow-tie (faces 8, 9 and 10, 11), the y-faces become twisted."""
    vertices, faces = shapes.box(PLATE)
    vertices = vertices.copy()
    vertices[4:, 0] *= -1.0
    return vertices, faces


def _edge_sharing_pair():
    """Two plates touching along one edge only: that edge is used by four faces."""
    first = shapes.box((20.0, 20.0, 20.0), (10.0, 10.0, 10.0))
    second = shapes.box((20.0, 20.0, 20.0), (30.0, 30.0, 10.0))
    return shapes.merge(first, second)


def _cracked_plate(gap: float = 5e-5, size=PLATE):
    """A plate with one corner of face 0 moved by ``gap`` mm: not bit-identical any more, so the
    three edges at that corner open (a crack of inexact export: closed when within the tolerance,
    1e-6 of the bounding-box diagonal by default)."""
    vertices, faces = shapes.box(size)
    corner = faces[0][0]
    vertices = np.vstack([vertices, vertices[corner] + [gap, 0.0, 0.0]])
    faces = faces.copy()
    faces[0] = [len(vertices) - 1, faces[0][1], faces[0][2]]
    return vertices, faces


def _torus_with_a_crossing_sliver():
    """A 120 x 60 torus (R 40 mm, r 10 mm) with one vertex of its outer equator pushed along the
    major circle past two neighbours: a fold of tessellation size whose faces cross."""
    vertices, faces = shapes.torus(40.0, 10.0, 120, 60)
    vertices = vertices.copy()
    apex = int(np.argmax(vertices[:, 0]))
    vertices[apex, 1] += 2.5 * (2.0 * np.pi * 50.0 / 120)
    return vertices, faces


def _loose_two_sided_triangle():
    """A plate plus a separate triangle listed twice with opposite winding (a two-sided sheet)."""
    vertices, faces = _plate()
    sheet = np.array([[100.0, 0.0, 0.0], [110.0, 0.0, 0.0], [100.0, 10.0, 0.0]])
    n = len(vertices)
    return np.vstack([vertices, sheet]), np.vstack([faces, [[n, n + 1, n + 2], [n, n + 2, n + 1]]])


def cases() -> list[Case]:
    """Every fixture, built fresh (arrays are not shared between calls)."""
    plate = (Box(PLATE),)
    out: list[Case] = []

    vertices, faces = _plate()
    out.append(Case("rover-chassis-plate", vertices, faces, "valid", (), (), solid=plate))

    vertices, faces = shapes.hollow_box(*RING)
    out.append(
        Case("gimbal-block-with-cavity", vertices, faces, "valid", (), (), solid=(Box(RING[0]), Box(RING[1], sign=-1)))
    )

    vertices, faces = shapes.merge(shapes.box((10.0, 10.0, 30.0)), shapes.box((10.0, 10.0, 30.0), (40.0, 0.0, 0.0)))
    out.append(
        Case(
            "two-spacers",
            vertices,
            faces,
            "valid",
            (),
            (),
            solid=(Box((10.0, 10.0, 30.0)), Box((10.0, 10.0, 30.0), (40.0, 0.0, 0.0))),
        )
    )

    vertices, faces = shapes.merge(_plate(), shapes.box((20.0, 20.0, 20.0), (0.0, 0.0, 30.0)))
    out.append(
        Case(
            "camera-mount-standing-on-plate",
            vertices,
            faces,
            "valid",
            (),
            (),
            solid=(Box(PLATE), Box((20.0, 20.0, 20.0), (0.0, 0.0, 30.0))),
        )
    )

    vertices, faces = _plate()
    out.append(
        Case("chassis-plate-saved-in-metres", vertices / 1000.0, faces, "warnings", ("implausible_size",), ("implausible_size",),
             repaired_codes=("implausible_size",), solid=(Box(tuple(s / 1000.0 for s in PLATE)),))
    )

    vertices, faces = _sliver_t_junction()
    out.append(
        Case("sliver-closing-t-junction", vertices, faces, "warnings", ("zero_area_faces",), ("zero_area_faces",), where={"zero_area_faces": {13}},
             repaired_codes=("zero_area_faces",), solid=plate)
    )

    vertices, faces = _plate()
    faces = np.vstack([faces, [[0, 0, 6]]])  # a triangle whose two corners weld together
    out.append(
        Case("plate-with-collapsed-face", vertices, faces, "warnings", ("collapsed_faces",), ("collapsed_faces",),
             where={"collapsed_faces": {12}}, repair_codes=("repaired_degenerate_faces",), solid=plate)
    )

    vertices, faces = _loose_two_sided_triangle()
    out.append(
        Case("plate-with-loose-two-sided-triangle", vertices, faces, "warnings", ("flat_shell", "duplicate_faces"),
             ("flat_shell", "duplicate_faces"),
             where={"duplicate_faces": {13}}, repair_codes=("repaired_duplicate_faces",), solid=plate)
    )

    vertices, faces = _plate()
    out.append(
        Case("chassis-plate-missing-face", vertices, faces[1:], "invalid", ("open_edges",), ("open_edges",),
             where={"open_edges": {0, 3, 7}}, repaired_codes=("open_edges",))
    )

    vertices, faces = _cracked_plate()
    out.append(
        Case("chassis-plate-cracked-corner", vertices, faces, "warnings", ("cracks_closed",), ("cracks_closed",),
             where={"cracks_closed": {0, 1, 4, 5, 10}}, repaired_codes=("cracks_closed",))
    )

    vertices, faces = _cracked_plate(gap=1e-3)
    out.append(
        Case("chassis-plate-crack-wider-than-the-tolerance", vertices, faces, "invalid", ("open_edges",), ("open_edges",),
             where={"open_edges": {0, 1, 4}}, repaired_codes=("open_edges",))
    )

    # Issue 8's examples: real CAD exports measured, not refused.
    vertices, faces = _cracked_plate(gap=5e-6, size=(50.0, 50.0, 50.0))
    out.append(
        Case("cube-with-a-crack-of-1e-7-of-its-size", vertices, faces, "warnings", ("cracks_closed",), ("cracks_closed",),
             where={"cracks_closed": {0, 1, 4, 5, 10}}, repaired_codes=("cracks_closed",), solid=(Box((50.0, 50.0, 50.0)),))
    )

    vertices, faces = shapes.merge(shapes.box((40.0, 40.0, 40.0)), shapes.box((40.0, 40.0, 40.0), (20.0, 10.0, 0.0)))
    out.append(
        Case("two-overlapping-cubes", vertices, faces, "warnings", ("shells_overlap",), ("shells_overlap",),
             where={"shells_overlap": {0, 12}}, repaired_codes=("shells_overlap",))
    )

    vertices, faces = shapes.merge(shapes.box(RING[0]), shapes.box((30.0, 30.0, 30.0), (5.0, 0.0, 0.0)))
    out.append(
        Case("cube-with-a-nested-cube-wound-outward", vertices, faces, "warnings", ("shells_overlap",), ("shells_overlap",),
             where={"shells_overlap": {0, 12}}, repair_codes=("repaired_void_orientation",),
             solid=(Box(RING[0]), Box((30.0, 30.0, 30.0), (5.0, 0.0, 0.0), sign=-1)))
    )

    vertices, faces = shapes.merge(  # a horizontal arm, a vertical arm and a corner block overlapping both
        shapes.box((60.0, 20.0, 20.0), (30.0, 10.0, 10.0)),
        shapes.box((20.0, 60.0, 24.0), (10.0, 30.0, 10.0)),
        shapes.box((24.0, 24.0, 16.0), (12.0, 12.0, 10.0)),
    )
    out.append(
        Case("l-bracket-of-three-overlapping-boxes", vertices, faces, "warnings", ("shells_overlap",), ("shells_overlap",),
             repaired_codes=("shells_overlap",))
    )

    vertices, faces = _torus_with_a_crossing_sliver()
    out.append(
        Case("torus-with-a-crossing-sliver", vertices, faces, "warnings", ("crossing_bounded",), ("crossing_bounded",),
             repaired_codes=("crossing_bounded",))
    )

    vertices, faces = shapes.merge(shapes.box((40.0, 40.0, 40.0)), shapes.box((20.0, 20.0, 20.0), (15.0, 0.0, 0.0), inward=True))
    out.append(
        Case("cube-whose-void-crosses-its-skin", vertices, faces, "invalid", ("void_crosses_skin",), ("void_crosses_skin",),
             # --repair reads the void as a body exported inside-out, flips it, and measures the union:
             # inclusion-exclusion, cube + block - their overlap (x 5..20, y and z -10..10).
             repair_codes=("repaired_inside_out",), repaired_codes=("shells_overlap",),
             solid=(Box((40.0, 40.0, 40.0)), Box((20.0, 20.0, 20.0), (15.0, 0.0, 0.0)),
                    Box((15.0, 20.0, 20.0), (12.5, 0.0, 0.0), sign=-1)))
    )

    vertices, faces = _plate()
    faces = faces.copy()
    faces[3] = faces[3][::-1]
    out.append(
        Case("chassis-plate-one-face-flipped", vertices, faces, "invalid", ("inconsistent_winding",), ("inconsistent_winding",),
             where={"inconsistent_winding": {3}}, repair_codes=("repaired_winding",), solid=plate)
    )

    vertices, faces = shapes.box(PLATE, inward=True)
    out.append(
        Case("chassis-plate-inside-out", vertices, faces, "invalid", ("inside_out",), ("inside_out",),
             where={"inside_out": {0, 1, 2, 3, 4}}, repair_codes=("repaired_inside_out",), solid=plate)
    )

    vertices, faces = shapes.merge(shapes.box(RING[0]), shapes.box(RING[1]))
    out.append(
        Case("gimbal-cavity-facing-outward", vertices, faces, "warnings", ("shells_overlap",), ("shells_overlap",),
             where={"shells_overlap": {0, 12}}, repair_codes=("repaired_void_orientation",),
             solid=(Box(RING[0]), Box(RING[1], sign=-1)))
    )

    vertices, faces = shapes.merge(shapes.box((10.0, 10.0, 30.0)), shapes.box((10.0, 10.0, 30.0), (40.0, 0.0, 0.0), inward=True))
    out.append(
        Case("spacer-pair-one-inside-out", vertices, faces, "invalid", ("inverted_shell",), ("inverted_shell",),
             where={"inverted_shell": {12}}, repair_codes=("repaired_inside_out",),
             solid=(Box((10.0, 10.0, 30.0)), Box((10.0, 10.0, 30.0), (40.0, 0.0, 0.0))))
    )

    vertices, faces = shapes.merge(_plate(), _plate())
    out.append(
        Case("chassis-plate-exported-twice", vertices, faces, "invalid", ("nonmanifold_edges", "duplicate_faces"),
             ("nonmanifold_edges", "duplicate_faces"), where={"duplicate_faces": set(range(12, 17))},
             repair_codes=("repaired_duplicate_faces",), solid=plate)
    )

    vertices, faces = shapes.merge(_plate(), shapes.box(PLATE, (30.0, 20.0, 10.0)))
    out.append(
        Case("chassis-plate-overlapping-copy", vertices, faces, "warnings", ("shells_overlap",),
             ("shells_overlap",), where={"shells_overlap": {0, 12}}, repaired_codes=("shells_overlap",))
    )

    vertices, faces = _bow_tie()
    out.append(
        Case("bow-tie-plate", vertices, faces, "invalid", ("self_intersection", "no_volume"), ("self_intersection", "no_volume"),
             where={"self_intersection": {8, 9, 10, 11}}, repaired_codes=("self_intersection", "no_volume"))
    )

    vertices, faces = _edge_sharing_pair()
    out.append(
        Case("spacers-sharing-an-edge", vertices, faces, "invalid", ("nonmanifold_edges",), ("nonmanifold_edges",),
             repaired_codes=("nonmanifold_edges",))
    )
    return out


def closed_form(solid: tuple[Box, ...], density: float, metres_per_unit: float):
    """Mass (kg), centre of mass (m) and inertia about it (kg m^2) of boxes and box voids.

    Box about its centre: m = rho a b c, I_xx = m (b^2 + c^2) / 12 (handbook formula, common
    practice); parts combined with the parallel-axis theorem I = I_c + m (|d|^2 E - d d^T)
    (Steiner's theorem, common practice). Lengths in the case's unit, scaled to metres here.
    """
    masses, centres, tensors = [], [], []
    for box in solid:
        a, b, c = (s * metres_per_unit for s in box.size)
        mass = box.sign * density * a * b * c
        masses.append(mass)
        centres.append(np.asarray(box.center, dtype=float) * metres_per_unit)
        tensors.append(np.diag([mass * (b * b + c * c), mass * (a * a + c * c), mass * (a * a + b * b)]) / 12.0)
    total = sum(masses)
    centre = sum(m * x for m, x in zip(masses, centres)) / total
    inertia = np.zeros((3, 3))
    for mass, position, tensor in zip(masses, centres, tensors):
        d = position - centre
        inertia += tensor + mass * (d @ d * np.eye(3) - np.outer(d, d))
    return total, centre, inertia


def write_example_folders(root: Path) -> list[Path]:
    """Write every case as OBJ and binary STL into ``root/<folder>/``; return the paths."""
    written = []
    for case in cases():
        directory = root / case.folder
        directory.mkdir(parents=True, exist_ok=True)
        codes = case.check_codes
        stem = f"{codes[0]}__{case.name}" if codes else case.name
        obj = directory / f"{stem}.obj"
        writers.write_obj(obj, case.vertices, case.faces, comment=f"meshprops validation example: {case.name}")
        stl = directory / f"{stem}.stl"
        writers.write_binary_stl(stl, shapes.triangles_of(case.vertices, case.faces), header=case.name.encode())
        written += [obj, stl]
    return written


if __name__ == "__main__":
    for path in write_example_folders(Path(__file__).resolve().parent):
        print(path)

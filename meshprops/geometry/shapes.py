"""Closed, outward-oriented triangle meshes of simple solids.

Used by the tests (against handbook formulas), the demo samples and the
benchmark. Each function returns ``(vertices, faces)``: ``(V, 3)`` float64 in
whatever length unit the caller means, and ``(F, 3)`` int64 indices wound
counter-clockwise seen from outside. Pass ``inward=True`` for an inside-out copy
(a void's shell).
"""

from __future__ import annotations

import numpy as np


def _finish(vertices, faces, center, inward: bool):
    vertices = np.asarray(vertices, dtype=np.float64) + np.asarray(center, dtype=np.float64)
    faces = np.asarray(faces, dtype=np.int64)
    if inward:
        faces = faces[:, ::-1].copy()
    return vertices, faces


def box(size=(1.0, 1.0, 1.0), center=(0.0, 0.0, 0.0), *, inward: bool = False):
    """Rectangular box with edge lengths ``size`` (a, b, c) centred at ``center``; 12 triangles."""
    a, b, c = (float(s) / 2.0 for s in size)
    vertices = np.array(
        [[-a, -b, -c], [a, -b, -c], [a, b, -c], [-a, b, -c], [-a, -b, c], [a, -b, c], [a, b, c], [-a, b, c]]
    )
    faces = [
        [0, 2, 1], [0, 3, 2],  # z = -c, normal -z
        [4, 5, 6], [4, 6, 7],  # z = +c
        [0, 1, 5], [0, 5, 4],  # y = -b
        [2, 3, 7], [2, 7, 6],  # y = +b
        [1, 2, 6], [1, 6, 5],  # x = +a
        [3, 0, 4], [3, 4, 7],  # x = -a
    ]  # fmt: skip
    return _finish(vertices, faces, center, inward)


def _ring_solid(rings: list[tuple[float, float]], sections: int, center, inward: bool):
    """Solid of revolution about z from (radius, z) rings, bottom to top; radius 0 = apex/cap point."""
    theta = np.linspace(0.0, 2.0 * np.pi, sections, endpoint=False)
    vertices = []
    ring_index = []
    for radius, z in rings:
        if radius == 0.0:
            ring_index.append([len(vertices)] * sections)
            vertices.append([0.0, 0.0, z])
        else:
            start = len(vertices)
            vertices.extend(np.column_stack([radius * np.cos(theta), radius * np.sin(theta), np.full(sections, z)]))
            ring_index.append(list(range(start, start + sections)))
    faces = []
    for lower, upper in zip(ring_index[:-1], ring_index[1:]):
        for k in range(sections):
            k1 = (k + 1) % sections
            a, b, c, d = lower[k], lower[k1], upper[k1], upper[k]
            if a != b:  # lower edge is a real ring segment
                faces.append([a, b, c])
            if c != d:  # upper edge is a real ring segment
                faces.append([a, c, d])
    return _finish(vertices, faces, center, inward)


def cylinder(radius=1.0, height=1.0, sections=64, center=(0.0, 0.0, 0.0), *, inward: bool = False):
    """Solid cylinder about z (regular ``sections``-gon prism), centred at ``center``."""
    h = height / 2.0
    return _ring_solid([(0.0, -h), (radius, -h), (radius, h), (0.0, h)], sections, center, inward)


def cone(radius=1.0, height=1.0, sections=64, center=(0.0, 0.0, 0.0), *, inward: bool = False):
    """Solid right cone about z: base of ``radius`` at z = 0, apex at z = ``height`` (plus ``center``)."""
    return _ring_solid([(0.0, 0.0), (radius, 0.0), (0.0, height)], sections, center, inward)


def uv_sphere(radius=1.0, rings=32, sections=64, center=(0.0, 0.0, 0.0), *, inward: bool = False):
    """Sphere of ``radius`` as latitude rings (inscribed polyhedron), centred at ``center``."""
    polar = np.linspace(np.pi, 0.0, rings + 1)  # south pole to north pole
    profile = [(0.0 if k in (0, rings) else radius * np.sin(p), radius * np.cos(p)) for k, p in enumerate(polar)]
    return _ring_solid(profile, sections, center, inward)


def torus(major_radius=2.0, minor_radius=0.5, major_sections=96, minor_sections=48, center=(0.0, 0.0, 0.0), *, inward=False):
    """Ring torus about z, tube radius ``minor_radius`` at ``major_radius`` from the axis."""
    u = np.linspace(0.0, 2.0 * np.pi, major_sections, endpoint=False)
    v = np.linspace(0.0, 2.0 * np.pi, minor_sections, endpoint=False)
    uu, vv = np.meshgrid(u, v, indexing="ij")
    ring = major_radius + minor_radius * np.cos(vv)
    vertices = np.stack([ring * np.cos(uu), ring * np.sin(uu), minor_radius * np.sin(vv)], axis=-1).reshape(-1, 3)
    i, j = np.meshgrid(np.arange(major_sections), np.arange(minor_sections), indexing="ij")
    i1, j1 = (i + 1) % major_sections, (j + 1) % minor_sections
    a = i * minor_sections + j
    b = i1 * minor_sections + j
    c = i1 * minor_sections + j1
    d = i * minor_sections + j1
    faces = np.concatenate([np.stack([a, b, c], -1).reshape(-1, 3), np.stack([a, c, d], -1).reshape(-1, 3)])
    return _finish(vertices, faces, center, inward)


def merge(*parts):
    """Join several ``(vertices, faces)`` meshes into one (shells stay separate)."""
    vertices, faces, offset = [], [], 0
    for part_vertices, part_faces in parts:
        vertices.append(part_vertices)
        faces.append(part_faces + offset)
        offset += len(part_vertices)
    return np.concatenate(vertices), np.concatenate(faces)


def hollow_box(outer=(2.0, 2.0, 2.0), inner=(1.0, 1.0, 1.0), center=(0.0, 0.0, 0.0)):
    """A box with a box-shaped void: outer shell outward, inner shell inward."""
    return merge(box(outer, center), box(inner, center, inward=True))


def triangles_of(vertices, faces) -> np.ndarray:
    """``(F, 3, 3)`` triangle corners of an indexed mesh."""
    return np.asarray(vertices)[np.asarray(faces)]


def tube(outer_radius=1.0, inner_radius=0.5, height=1.0, sections=64, center=(0.0, 0.0, 0.0), *, inward=False):
    """Thick-walled tube about z (a cylinder with a coaxial through-bore), centred at ``center``."""
    if not 0.0 < inner_radius < outer_radius:
        raise ValueError(f"expected 0 < inner_radius < outer_radius, got {inner_radius}, {outer_radius}")
    h = height / 2.0
    theta = np.linspace(0.0, 2.0 * np.pi, sections, endpoint=False)
    profile = [(inner_radius, -h), (outer_radius, -h), (outer_radius, h), (inner_radius, h)]  # counter-clockwise in (r, z)
    vertices = np.concatenate(
        [np.column_stack([r * np.cos(theta), r * np.sin(theta), np.full(sections, z)]) for r, z in profile]
    )
    faces = []
    for ring in range(4):
        lower, upper = ring * sections, ((ring + 1) % 4) * sections
        for k in range(sections):
            k1 = (k + 1) % sections
            a, b, c, d = lower + k, lower + k1, upper + k1, upper + k
            faces += [[a, b, c], [a, c, d]]
    return _finish(vertices, faces, center, inward)


def extrusion(polygon, height=1.0, z0=0.0, *, inward=False):
    """Prism from a counter-clockwise polygon in the xy plane, from ``z0`` to ``z0 + height``.

    The caps are fan-triangulated from the first vertex, so the polygon must be
    star-shaped about its first vertex (start an L shape at its inner corner).
    """
    polygon = np.asarray(polygon, dtype=np.float64)
    n = len(polygon)
    bottom = np.column_stack([polygon, np.full(n, z0)])
    top = np.column_stack([polygon, np.full(n, z0 + height)])
    vertices = np.concatenate([bottom, top])
    faces = []
    for k in range(n):
        k1 = (k + 1) % n
        faces += [[k, k1, n + k1], [k, n + k1, n + k]]
    for k in range(1, n - 1):
        faces.append([0, k + 1, k])  # bottom, normal -z
        faces.append([n, n + k, n + k + 1])  # top, normal +z
    return _finish(vertices, faces, (0.0, 0.0, 0.0), inward)

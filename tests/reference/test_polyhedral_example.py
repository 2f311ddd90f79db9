"""Tetrahedra and polyhedra against an exact independent derivation and a published example.

Independent derivation (the source of the tight checks): the inertia of a tetrahedron by exact
rational integration. Map the unit simplex affinely, x = p0 + J u, and integrate monomials with
Dirichlet's formula ∫_simplex u^a v^b w^c = a! b! c! / (a + b + c + 3)! (standard calculus),
in :class:`fractions.Fraction` arithmetic, so the reference carries no rounding at all.

Published example: F. Tonon (2004), "Explicit exact formulas for the 3-D tetrahedron inertia
tensor in terms of its vertex coordinates", Journal of Mathematics and Statistics 1(1): 8–11,
numerical example. Its vertex coordinates and inertia results below are FROM MEMORY. They
agree with the exact derivation to 1.7e-8 relative, every entry off by the same factor, which
points to a rounding of the volume in the paper's computation; the check is held at 5e-8
accordingly.
"""

from __future__ import annotations

from fractions import Fraction
from math import factorial

import numpy as np
import pytest

from meshprops import measure_mesh, mesh_from_arrays


def _dirichlet(a: int, b: int, c: int) -> Fraction:
    return Fraction(factorial(a) * factorial(b) * factorial(c), factorial(a + b + c + 3))


def exact_moments(points):
    """Exact signed moments ∫1, ∫x, ∫x xᵀ (about the world origin) of the tetrahedron p0 p1 p2 p3.

    The sign is that of det[p1 − p0, p2 − p0, p3 − p0], so fans of tetrahedra add up like a
    closed surface does. Returns Fractions.
    """
    p = [[Fraction(x) for x in point] for point in points]
    j = [[p[k + 1][i] - p[0][i] for k in range(3)] for i in range(3)]  # x = p0 + J u
    determinant = (
        j[0][0] * (j[1][1] * j[2][2] - j[1][2] * j[2][1])
        - j[0][1] * (j[1][0] * j[2][2] - j[1][2] * j[2][0])
        + j[0][2] * (j[1][0] * j[2][1] - j[1][1] * j[2][0])
    )
    unit = [(1, 0, 0), (0, 1, 0), (0, 0, 1)]
    volume = determinant * _dirichlet(0, 0, 0)
    first = [
        determinant * (p[0][i] * _dirichlet(0, 0, 0) + sum(j[i][k] * _dirichlet(*unit[k]) for k in range(3)))
        for i in range(3)
    ]

    def second(i, m):  # ∫ x_i x_m dV
        total = p[0][i] * p[0][m] * _dirichlet(0, 0, 0)
        for k in range(3):
            total += (p[0][i] * j[m][k] + p[0][m] * j[i][k]) * _dirichlet(*unit[k])
            for n in range(3):
                exponent = [0, 0, 0]
                exponent[k] += 1
                exponent[n] += 1
                total += j[i][k] * j[m][n] * _dirichlet(*exponent)
        return determinant * total

    return volume, first, [[second(i, m) for m in range(3)] for i in range(3)]


def centroid_and_tensor(volume, first, second):
    """Centroid and unit-density inertia tensor about it, I = tr(S) E − S with S about the centroid (exact)."""
    centroid = [f / volume for f in first]
    s = [[second[i][m] - volume * centroid[i] * centroid[m] for m in range(3)] for i in range(3)]
    trace = s[0][0] + s[1][1] + s[2][2]
    return centroid, [[(trace if i == m else 0) - s[i][m] for m in range(3)] for i in range(3)]


def exact_tetrahedron(points):
    """Exact |volume|, centroid and (unit density) inertia tensor about the centroid, as Fractions."""
    volume, first, second = exact_moments(points)
    if volume < 0:
        volume, first, second = -volume, [-f for f in first], [[-x for x in row] for row in second]
    centroid, tensor = centroid_and_tensor(volume, first, second)
    return volume, centroid, tensor


def tetrahedron_mesh(points):
    """Four outward triangles of the tetrahedron with these corners (either handedness)."""
    points = np.asarray(points, dtype=np.float64)
    faces = np.array([[0, 2, 1], [0, 1, 3], [0, 3, 2], [1, 2, 3]])
    signed = np.dot(points[1] - points[0], np.cross(points[2] - points[0], points[3] - points[0]))
    if signed < 0:
        faces = faces[:, ::-1]
    return points, faces


TONON_VERTICES = [
    (8.33220, -11.86875, 0.93355),
    (0.75523, 5.00000, 16.37072),
    (52.61236, 5.00000, -5.38580),
    (2.00000, 5.00000, 3.00000),
]


def test_tonon_example_against_the_exact_derivation():
    vertices, faces = tetrahedron_mesh(TONON_VERTICES)
    measured = measure_mesh(mesh_from_arrays(vertices, faces), density=1.0).properties
    volume, centroid, tensor = exact_tetrahedron(TONON_VERTICES)
    assert measured.volume == pytest.approx(float(volume), rel=1e-13)
    np.testing.assert_allclose(measured.center_of_mass, [float(c) for c in centroid], rtol=1e-13)
    exact = np.array([[float(x) for x in row] for row in tensor])
    np.testing.assert_allclose(measured.inertia_about_com, exact, rtol=0, atol=1e-12 * np.abs(exact).max())


def test_tonon_published_numbers_from_memory():
    # Tonon (2004), numerical example (FROM MEMORY): about the centroid, unit density,
    # a = ∫(y² + z²), b = ∫(x² + z²), c = ∫(x² + y²), and products a' = ∫yz, b' = ∫xz, c' = ∫xy;
    # the tensor is [[a, −c', −b'], [−c', b, −a'], [−b', −a', c]] in our (x, y, z) order.
    vertices, faces = tetrahedron_mesh(TONON_VERTICES)
    measured = measure_mesh(mesh_from_arrays(vertices, faces), density=1.0).properties
    # A tetrahedron's centroid is the mean of its corners (elementary).
    np.testing.assert_allclose(measured.center_of_mass, np.mean(TONON_VERTICES, axis=0), rtol=1e-14)
    a, b, c = 43520.33257, 194711.28938, 191168.76173
    a_, b_, c_ = 4417.66150, -46343.16662, 11996.20119
    published = np.array([[a, -c_, -b_], [-c_, b, -a_], [-b_, -a_, c]])
    np.testing.assert_allclose(measured.inertia_about_com, published, rtol=5e-8)


@pytest.mark.parametrize("seed", range(5))
def test_random_tetrahedra_against_the_exact_derivation(seed):
    rng = np.random.default_rng(seed)
    points = rng.uniform(-1.0, 1.0, size=(4, 3)) * [0.5, 1.0, 2.0] + rng.uniform(-3.0, 3.0, size=3)
    vertices, faces = tetrahedron_mesh(points)
    measured = measure_mesh(mesh_from_arrays(vertices, faces), density=1.0).properties
    volume, centroid, tensor = exact_tetrahedron([tuple(map(float, point)) for point in points])
    assert measured.volume == pytest.approx(float(volume), rel=1e-12)
    np.testing.assert_allclose(measured.center_of_mass, [float(x) for x in centroid], rtol=0, atol=1e-12)
    exact = np.array([[float(x) for x in row] for row in tensor])
    np.testing.assert_allclose(measured.inertia_about_com, exact, rtol=0, atol=1e-11 * np.abs(exact).max())


def test_a_polyhedron_is_the_sum_of_its_tetrahedra():
    # An irregular hexahedron with non-planar sides, given as 12 triangles: meshprops integrates
    # the closed surface; the reference sums the exact signed tetrahedra (corner 0, face).
    corners = [(0, 0, 0), (2, 0, 0), (2, 1.5, 0), (0, 1, 0), (0, 0, 1), (2.5, 0, 1.25), (2, 1.5, 2), (0, 1, 1)]
    faces = np.array(
        [[0, 2, 1], [0, 3, 2], [4, 5, 6], [4, 6, 7], [0, 1, 5], [0, 5, 4], [2, 3, 7], [2, 7, 6], [1, 2, 6], [1, 6, 5],
         [3, 0, 4], [3, 4, 7]]
    )  # fmt: skip
    vertices = np.array(corners, dtype=np.float64)
    measured = measure_mesh(mesh_from_arrays(vertices, faces), density=1.0).properties
    volume, first, second = Fraction(0), [Fraction(0)] * 3, [[Fraction(0)] * 3 for _ in range(3)]
    apex = (-1, 0.5, 0.5)  # any point: the signed tetrahedra of a closed surface add up to the solid
    for face in faces:
        v, f, s = exact_moments([apex] + [corners[i] for i in face])
        volume += v
        first = [a + b for a, b in zip(first, f)]
        second = [[a + b for a, b in zip(row, other)] for row, other in zip(second, s)]
    centroid, tensor = centroid_and_tensor(volume, first, second)
    assert measured.volume == pytest.approx(float(volume), rel=1e-14)
    np.testing.assert_allclose(measured.center_of_mass, [float(c) for c in centroid], rtol=1e-14)
    exact = np.array([[float(x) for x in row] for row in tensor])
    np.testing.assert_allclose(measured.inertia_about_com, exact, rtol=0, atol=1e-13 * np.abs(exact).max())
    assert abs(exact[0, 1]) > 0.01 * exact.max()  # asymmetric: the products are really tested

"""Triangle quadrature, closest points and near-singular integrals used by the BEM module."""

from math import factorial

import numpy as np
import pytest

from bemcheck.mesh.surface import SurfaceMesh
from bemcheck.mesh.triangles import closest_points
from bemcheck.solvers.bem import quadrature as quad
from bemcheck.solvers.bem.integrals import moments

TRI = np.array([[0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [0.2, 0.9, 0.0]])


def one_triangle(corners=TRI):
    """A one-triangle surface (not closed: only for integrals over that triangle)."""
    return SurfaceMesh(corners, np.array([[0, 1, 2]]), np.array([1]), {}, mesh_vertex=np.arange(3))


def solid_angle(corners, x):
    """Signed solid angle of a triangle seen from x.

    Van Oosterom & Strackee (1983), The solid angle of a plane triangle,
    IEEE Trans. Biomed. Eng. 30(2), 125-126: tan(Ω/2) = R1·(R2×R3) /
    (r1 r2 r3 + (R1·R2) r3 + (R1·R3) r2 + (R2·R3) r1).
    """
    r = corners - x
    n = np.linalg.norm(r, axis=1)
    num = r[0] @ np.cross(r[1], r[2])
    den = n.prod() + (r[0] @ r[1]) * n[2] + (r[0] @ r[2]) * n[1] + (r[1] @ r[2]) * n[0]
    return 2.0 * np.arctan2(num, den)


@pytest.mark.parametrize("level", [0, 1, 3])
def test_rule_integrates_degree_four_exactly(level):
    """∫ L1^a L2^b L3^c dA = 2A a! b! c! / (a+b+c+2)! (Eisenberg & Malvern 1973,
    On finite element integration in natural co-ordinates, IJNME 7, 574-575):
    exact to degree 4 at every level; degree 8 is not exact on the base rule."""
    r = quad.rule(level)
    for a, b, c in [(0, 0, 0), (1, 0, 0), (2, 1, 0), (1, 1, 2), (4, 0, 0), (2, 2, 0)]:
        exact = 2 * factorial(a) * factorial(b) * factorial(c) / factorial(a + b + c + 2)
        got = np.sum(r.weights * r.bary[:, 0] ** a * r.bary[:, 1] ** b * r.bary[:, 2] ** c)
        assert got == pytest.approx(exact, rel=1e-12, abs=1e-15)
    r0 = quad.rule(0)
    high = np.sum(r0.weights * r0.bary[:, 0] ** 8)
    assert abs(high - 2 * factorial(8) / factorial(10)) > 1e-4


def test_closest_points_agree_with_exhaustive_search():
    """Ericson (2005) closest point vs the minimum over a dense lattice of the
    triangle (exhaustive search; spacing 1/400 bounds its error)."""
    rng = np.random.default_rng(3)
    lattice = quad._lattice(400).reshape(-1, 3)
    for _ in range(30):
        corners = rng.normal(size=(3, 3))
        x = rng.normal(size=3) * 1.5
        d, bary = closest_points(x[None], *corners[:, None, :])
        samples = lattice @ corners
        brute = np.linalg.norm(samples - x, axis=1).min()
        size = np.linalg.norm(corners[[1, 2, 0]] - corners, axis=1).max()
        assert d[0] <= brute + 1e-12
        assert d[0] >= brute - size / 400
        assert bary.min() >= -1e-12 and bary.sum() == pytest.approx(1.0)
        assert np.linalg.norm(bary[0] @ corners - x) == pytest.approx(d[0], rel=1e-12, abs=1e-14)


@pytest.mark.parametrize("ratio", [5.0, 1.0, 0.2, 0.05, 0.02])
def test_near_singular_double_layer_matches_solid_angle(ratio):
    """∫_T ∂G_0/∂n_y dS_y = -Ω/(4π) (Ω of Van Oosterom & Strackee 1983) for points
    at distance ratio × edge above the interior, beside an edge and off a corner:
    the adaptive subdivision keeps the error below 1e-5 of 1/2 (the on-surface value)."""
    surface = one_triangle()
    size = surface.sizes[0]
    d = ratio * size
    points = np.array(
        [[0.4, 0.3, d], [0.5, -d / np.sqrt(2), d / np.sqrt(2)], [-d / np.sqrt(3), -d / np.sqrt(3), -d / np.sqrt(3)]]
    )
    got = moments(surface, points, k=1.0).solid
    exact = np.array([-solid_angle(TRI, x) / (4 * np.pi) for x in points])
    np.testing.assert_allclose(got, exact, atol=5e-6)


def test_levels_grow_as_points_approach():
    """Subdivision depth follows log2(2 h / d), capped (common practice, no source)."""
    lv = quad.levels(np.array([10.0, 2.0, 1.0, 0.5, 1e-9, 0.0]), 1.0)
    assert lv.tolist() == [0, 0, 1, 2, quad.MAX_LEVEL, quad.MAX_LEVEL]

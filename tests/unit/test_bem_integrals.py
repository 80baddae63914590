"""The numpy surface integrals against bempp-cl's own operators and against Green's identities.

bempp-cl (the reference library here) evaluates potentials and far fields with
its regular Gauss rule, which is exact enough away from the surface; near the
surface we check identities that hold exactly instead.
"""

import numpy as np
import pytest

from bemcheck.solvers.bem.integrals import far_field_moments, moments
from bemcheck.solvers.bem.runtime import bempp
from bemcheck.solvers.bem.surface import surface_from_mesh
from tests.support.icosphere import icosphere, ray_hit, voxel_body

K = 2.0


@pytest.fixture(scope="module")
def sphere():
    """Unit sphere, 320 triangles; a smooth P1 density and a piecewise-constant one on it."""
    s = surface_from_mesh(icosphere(1.0, 4))
    x = s.vertices
    u = np.exp(1j * K * x[:, 0]) * (1.0 + 0.3 * x[:, 2])
    c = s.vertices[s.triangles].mean(axis=1)
    g = np.cos(2.0 * c[:, 1]) + 0.5j * c[:, 0]
    api = bempp()
    grid = api.Grid(s.vertices.T.copy(), s.triangles.T.astype(np.uint32), s.domains.astype(np.uint32))
    return s, u, g, api, grid


def _points_at(s, gap):
    """Points off the sphere at ``gap`` element sizes, in several directions."""
    d = np.array([[0.3, 0.2, 0.93], [-0.8, 0.5, 0.33], [0.1, -0.99, 0.05], [0.6, 0.6, -0.53]])
    d /= np.linalg.norm(d, axis=1, keepdims=True)
    return d * (1.0 + gap * s.element_size)


def test_layer_potentials_match_bempp_away_from_the_surface(sphere):
    """Double- and single-layer potentials at 3 element sizes off the surface agree with
    bempp-cl's potential operators (same kernel e^{ikR}/4πR) to 1e-5."""
    s, u, g, api, grid = sphere
    pts = _points_at(s, 3.0)
    p1 = api.function_space(grid, "P", 1)
    dp0 = api.function_space(grid, "DP", 0)
    pot = api.operators.potential.helmholtz
    ref_dl = pot.double_layer(p1, pts.T, K).evaluate(api.GridFunction(p1, coefficients=u))[0]
    ref_sl = pot.single_layer(dp0, pts.T, K).evaluate(api.GridFunction(dp0, coefficients=g))[0]
    m = moments(s, pts, K, single=False, p0_support=np.arange(s.n_triangles))
    np.testing.assert_allclose(m.double_layer_potential() @ u, ref_dl, rtol=1e-5)
    np.testing.assert_allclose(m.single_p0 @ g, ref_sl, rtol=1e-5)


def test_far_field_matches_bempp(sphere):
    """Far-field integrals against bempp-cl's far-field operators (which include 1/4π)."""
    s, u, g, api, grid = sphere
    d = np.array([[0.0, 0.0, 1.0], [1.0, 0.0, 0.0], [0.6, -0.48, 0.64]])
    p1 = api.function_space(grid, "P", 1)
    dp0 = api.function_space(grid, "DP", 0)
    ff = api.operators.far_field.helmholtz
    ref_dl = ff.double_layer(p1, d.T, K).evaluate(api.GridFunction(p1, coefficients=u))[0]
    ref_sl = ff.single_layer(dp0, d.T, K).evaluate(api.GridFunction(dp0, coefficients=g))[0]
    dmat, smat = far_field_moments(s, d, K, np.arange(s.n_triangles))
    np.testing.assert_allclose(dmat @ u, ref_dl, rtol=0, atol=1e-10 * np.abs(ref_dl).max())
    np.testing.assert_allclose(smat @ g, ref_sl, rtol=0, atol=1e-10 * np.abs(ref_sl).max())


def test_monopole_projections_match_bempp(sphere):
    """∫ φ_v G(x0, y) dS and ∫ φ_v ∂G/∂n_y dS (the right-hand side of a monopole at x0)
    against bempp-cl's projection of the same functions, x0 two element sizes off:
    within 1e-4 (the error budget of our base rule at that distance, see bem_quadrature)."""
    s, u, g, api, grid = sphere
    x0 = _points_at(s, 2.0)[1]
    p1 = api.function_space(grid, "P", 1)

    @api.callable(complex=True, vectorized=True)
    def green(x, n, domain_index, result):
        r = np.linalg.norm(x - x0[:, None], axis=0)
        result[0] = np.exp(1j * K * r) / (4 * np.pi * r)

    @api.callable(complex=True, vectorized=True)
    def green_dn(x, n, domain_index, result):
        diff = x0[:, None] - x
        r = np.linalg.norm(diff, axis=0)
        result[0] = np.exp(1j * K * r) / (4 * np.pi * r) * (1 - 1j * K * r) * np.sum(diff * n, axis=0) / r**2

    # a fresh set: GridFunction(...).parameters is bempp-cl's global one
    params = api.DefaultParameters()
    params.quadrature.regular = 8  # near-singular for bempp's rule too: give it a fine one
    ref_s = api.GridFunction(p1, fun=green, parameters=params).projections()
    ref_d = api.GridFunction(p1, fun=green_dn, parameters=params).projections()
    m = moments(s, x0[None], K)
    np.testing.assert_allclose(m.single[0], ref_s, rtol=1e-4, atol=1e-6 * np.abs(ref_s).max())
    np.testing.assert_allclose(m.double[0], ref_d, rtol=1e-4, atol=1e-6 * np.abs(ref_d).max())


def test_laplace_double_layer_of_one_is_zero_outside_and_minus_one_inside():
    """Gauss: ∫ ∂/∂n_y (1/4π|x-y|) dS_y = 0 outside a closed surface, -1 inside
    (Kellogg, Foundations of Potential Theory, 1929, ch. VI; from memory), on an
    L-shaped polycube (x < 0.2, y < 0.4, z < 0.4 without y, z > 0.2), at points from
    0.3 down to 1e-9 element sizes off faces, the re-entrant edge and a convex edge."""
    s = surface_from_mesh(voxel_body(np.array([[[1, 1], [1, 0]]], bool), 0.2, n=2))
    h = s.element_size
    out = [[0.1, 0.3, 0.3], [0.1, 0.2 + 0.01 * h, 0.2 + 0.01 * h], [0.2 + 0.1 * h, 0.1, 0.1], [-0.5, 0.1, 0.1],
           [0.2 + 1e-3 * h, 0.2, 0.1], [0.1, 0.2 + 1e-4 * h, 0.3], [0.2 + 1e-4 * h, 0.4 + 1e-4 * h, 0.1],
           [0.2 + 1e-9 * h, 0.2, 0.1]]  # fmt: skip
    inside = [[0.1, 0.1, 0.1], [0.1, 0.3, 0.2 - 0.3 * h], [0.2 - 0.01 * h, 0.1, 0.3],
              [0.2 - 1e-3 * h, 0.2, 0.1], [0.1, 0.2 - 1e-4 * h, 0.3], [0.2 - 1e-9 * h, 0.2, 0.1]]  # fmt: skip
    m = moments(s, np.array(out + inside), K, single=False)
    np.testing.assert_allclose(m.solid[: len(out)], 0.0, atol=1e-6)
    np.testing.assert_allclose(m.solid[len(out) :], -1.0, atol=1e-6)


def test_a_point_deep_inside_with_no_triangle_near_is_inside():
    """The centre of a sphere 0.1 m in radius meshed with 0.02 m elements: no triangle is
    near it, the solid angle is -1 (Gauss, as above), so it is inside, not 'on the surface'
    (the snap onto the surface is for points within a fraction of an element of it)."""
    from tests.support.icosphere import icosphere

    s = surface_from_mesh(icosphere(0.1, 4))
    m = moments(s, np.array([[0.0, 0.0, 0.0], [0.0, 0.0, 0.5]]), K, single=False)
    assert m.inside.tolist() == [True, False] and not m.on_surface.any()


@pytest.fixture(scope="module")
def plane_wave_on_sphere():
    """A plane wave's P1 trace and P0 normal derivative on a 1,280-triangle sphere."""
    mesh = icosphere(1.0, 8)
    s = surface_from_mesh(mesh)
    d = np.array([0.36, 0.48, 0.8])
    u = np.exp(1j * K * s.vertices @ d)
    centroid = s.vertices[s.triangles].mean(axis=1)
    dudn = 1j * K * (s.normals @ d) * np.exp(1j * K * centroid @ d)
    rng = np.random.default_rng(0)
    rays = rng.normal(size=(40, 3))
    on_mesh = np.array([ray_hit(mesh, r) for r in rays])
    return s, u, dudn, on_mesh


@pytest.mark.parametrize("gap", [3.0, 0.3, 0.01, 1e-3, 1e-5])
def test_green_identity_holds_up_to_the_surface(plane_wave_on_sphere, gap):
    """For a field regular inside a closed surface (a plane wave), DL(u) - SL(∂u/∂n) = 0
    outside (Green's representation theorem: Colton & Kress, Integral Equation Methods in
    Scattering Theory, 1983, thm. 3.1).  With u interpolated in P1 and ∂u/∂n in P0 the
    residual is a discretisation error, 2-4e-3 here, that must not grow as the point nears
    the surface: without the subtraction of u(x*) ∫∂G_0/∂n it reached 0.17 at 1e-3 and
    1.1 at 1e-4 element sizes; bempp-cl's regular rule loses 8-34 % (measured here when the solver was chosen)."""
    s, u, dudn, on_mesh = plane_wave_on_sphere
    pts = on_mesh * (1.0 + gap * s.element_size)
    m = moments(s, pts, K, single=False, p0_support=np.arange(s.n_triangles))
    assert not m.on_surface.any()
    residual = m.double_layer_potential() @ u - m.single_p0 @ dudn
    assert np.abs(residual).max() < 8e-3

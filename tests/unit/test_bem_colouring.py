"""Pieces of the fused assembly: the triangle colouring, the P1 surface curls, the fast cosine and sine."""

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from bemcheck.solvers.bem.assembly import colour_triangles
from bemcheck.solvers.bem.kernel import surface_curls
from tests.support.icosphere import icosphere


def _check_colouring(triangles):
    groups = colour_triangles(triangles)
    seen = np.sort(np.concatenate(groups))
    assert np.array_equal(seen, np.arange(len(triangles)))  # each triangle once
    for g in groups:
        corners = triangles[g].reshape(-1)
        assert len(np.unique(corners)) == len(corners)  # no shared vertex in a group


def test_colouring_of_a_sphere():
    mesh = icosphere(1.0, 6)
    _check_colouring(mesh.triangles)
    # a vertex where m triangles meet needs m colours; geodesic vertices have 5 or 6
    assert 6 <= len(colour_triangles(mesh.triangles)) <= 16


@settings(max_examples=50, deadline=None)
@given(st.lists(st.lists(st.integers(0, 12), min_size=3, max_size=3, unique=True), min_size=1, max_size=40))
def test_colouring_of_any_triangle_soup(rows):
    _check_colouring(np.array(rows))


def test_surface_curl_is_normal_cross_gradient():
    """For P1 on a triangle, ∇φ_a is constant, sums to zero over a and satisfies
    ∇φ_a·(p_b - p_c) = δ_ab - δ_ac (linear interpolation, any FEM text, e.g.
    Sauter & Schwab 2011, Boundary Element Methods, sec. 4.1)."""
    rng = np.random.default_rng(4)
    p = rng.normal(size=(3, 3))
    n = np.cross(p[1] - p[0], p[2] - p[0])
    n /= np.linalg.norm(n)
    curls = surface_curls(p, np.array([[0, 1, 2]]), n[None])[0]
    grads = -np.cross(n, curls)  # n × (n × g) = -g for tangent g
    assert np.allclose(curls @ n, 0.0) and np.allclose(curls.sum(axis=0), 0.0)
    for a in range(3):
        for b in range(3):
            assert np.isclose(grads[a] @ (p[b] - p[0]), (a == b) - (a == 0))


def test_cosine_and_sine_against_numpy():
    """The fast (cos, sin) against numpy's libm values over the arguments the
    assembly and the far field meet (a few hundred radians either side of 0):
    within 5e-14 absolute."""
    from bemcheck.solvers.bem.kernel import cis

    x = np.concatenate([np.linspace(0.0, 10.0, 20001), np.geomspace(10.0, 400.0, 5001)])
    x = np.concatenate([x, -x])
    got = np.array([cis(v) for v in x])
    assert np.abs(got[:, 0] - np.cos(x)).max() < 5e-14
    assert np.abs(got[:, 1] - np.sin(x)).max() < 5e-14


def test_colouring_of_a_fan_of_a_hundred_triangles():
    """A disk triangulated as a fan round its centre (as some CAD exports do): all
    hundred triangles share the centre vertex, so each needs its own colour."""
    n = 100
    fan = np.array([[0, 1 + i, 1 + (i + 1) % n] for i in range(n)])
    groups = colour_triangles(fan)
    assert len(groups) == n
    _check_colouring(fan)

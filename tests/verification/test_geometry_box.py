"""Cabinet meshes against exact box formulas and the Steiner formula.

A box with all edges rounded at radius r is the parallel body, at distance r,
of the inner box with edges a' = a - 2r, b', c'.  Steiner's formula for a
convex body K (Schneider, *Convex Bodies: The Brunn-Minkowski Theory*, 2nd ed.,
2014, sec. 4.2, eq. 4.2.27 as recalled: from memory for the number):

    V(K + rB) = V + S r + M r^2 + 4/3 pi r^3,    S(K + rB) = S + 2 M r + 4 pi r^2

with, for a box, S = 2(a'b' + b'c' + c'a') and the integral of mean curvature
M = 1/2 sum(edge length x exterior angle) = pi (a' + b' + c').
"""

import math

import numpy as np
import pytest

from bemcheck.case.model import Body
from bemcheck.case.shapes import Box
from bemcheck.errors import GeometryError
from bemcheck.mesh.bodies import mesh_body
from bemcheck.mesh.checks import check_surface

SIZE = (0.12, 0.2, 0.3)  # depth (z), width (x), height (y)


def _measure(mesh, mask=None):
    t = mesh.triangles if mask is None else mesh.triangles[mask]
    p = mesh.vertices[t]
    area = 0.5 * np.linalg.norm(np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]), axis=1).sum()
    volume = np.einsum("ij,ij->i", p[:, 0], np.cross(p[:, 1], p[:, 2])).sum() / 6
    return area, volume


def steiner(size, r):
    a, b, c = (s - 2 * r for s in size)
    s0, m = 2 * (a * b + b * c + c * a), math.pi * (a + b + c)
    return s0 + 2 * m * r + 4 * math.pi * r**2, a * b * c + s0 * r + m * r**2 + 4 / 3 * math.pi * r**3


def test_sharp_box_is_exact(tmp_path):
    d, w, h = SIZE
    mesh = mesh_body(Body("cab", Box(SIZE)), 0.05, tmp_path)
    area, volume = _measure(mesh)
    assert area == pytest.approx(2 * (d * w + w * h + h * d), rel=1e-9)
    assert volume == pytest.approx(d * w * h, rel=1e-9)
    driver = mesh.parts == mesh.part_names.index("driver")
    assert _measure(mesh, driver)[0] == pytest.approx(w * h, rel=1e-9)
    assert np.allclose(mesh.vertices[np.unique(mesh.triangles[driver])][:, 2], d / 2)
    extent = np.ptp(mesh.vertices, axis=0)
    assert extent == pytest.approx([w, h, d], rel=1e-12)


def test_steiner_formula_reduces_to_the_box():
    # the reference itself: r = 0 gives the plain box, r = half the sides a sphere-capped slab
    assert steiner((1.0, 2.0, 3.0), 0.0) == pytest.approx((22.0, 6.0))
    assert steiner((1.0, 1.0, 1.0), 0.5) == pytest.approx((math.pi, math.pi / 6))


@pytest.mark.parametrize("h, rel", [(0.02, 0.005), (343.0 / 100 / 6, 0.01)], ids=["2.4 kHz band", "coarsest band"])
def test_rounded_box_follows_steiner(tmp_path, h, rel):
    r = 0.02
    mesh = mesh_body(Body("cab", Box(SIZE, r)), h, tmp_path)
    check_surface(mesh.vertices, mesh.triangles, "cab")
    area, volume = _measure(mesh)
    ref_area, ref_volume = steiner(SIZE, r)
    assert area == pytest.approx(ref_area, rel=rel)
    assert volume == pytest.approx(ref_volume, rel=rel)
    driver = mesh.parts == mesh.part_names.index("driver")
    assert _measure(mesh, driver)[0] == pytest.approx((SIZE[1] - 2 * r) * (SIZE[2] - 2 * r), rel=1e-9)
    edges = np.linalg.norm(np.diff(mesh.vertices[mesh.triangles][:, [0, 1, 2, 0]], axis=1), axis=2)
    assert edges.max() <= min(h, SIZE[0] / 2)


def test_too_round_is_refused(tmp_path):
    with pytest.raises(GeometryError, match="edge_radius"):
        mesh_body(Body("cab", Box(SIZE, 0.06)), 0.05, tmp_path)

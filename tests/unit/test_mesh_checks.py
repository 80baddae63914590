"""Surface checks, point-triangle distances and winding numbers on hand-made meshes.

References: the octahedron with vertices at +-1 on the axes has volume 4/3
(regular octahedron of edge s: V = sqrt(2)/3 s^3, s = sqrt(2); e.g. Zwillinger,
*CRC Standard Mathematical Tables*, 31st ed., 2003, sec. 4.6, from memory).
The winding number of a closed surface is 1 inside, 0 outside (Van Oosterom &
Strackee 1983; Jacobson et al. 2013, "Robust inside-outside segmentation
using generalized winding numbers", ACM TOG 32(4), eq. 2).
"""

import warnings

import numpy as np
import pytest

from bemcheck.errors import GeometryError
from bemcheck.mesh.checks import MeshNotice, check_surface
from bemcheck.mesh.distance import nearest_on_surface, point_triangle_distance, winding_number

OCTA_V = np.array([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]], float)
OCTA_T = np.array([[0, 2, 4], [2, 1, 4], [1, 3, 4], [3, 0, 4], [2, 0, 5], [1, 2, 5], [3, 1, 5], [0, 3, 5]])


def volume(v, t):
    p = v[t]
    return np.einsum("ij,ij->i", p[:, 0], np.cross(p[:, 1], p[:, 2])).sum() / 6


def test_octahedron_passes_outward():
    t = check_surface(OCTA_V, OCTA_T, "octa")
    assert volume(OCTA_V, t) == pytest.approx(4 / 3)


def test_inward_surface_is_flipped_with_a_notice():
    with pytest.warns(MeshNotice, match="inward"):
        t = check_surface(OCTA_V, OCTA_T[:, ::-1], "octa")
    assert volume(OCTA_V, t) == pytest.approx(4 / 3)


def test_two_bodies_one_inverted_is_refused():
    v = np.vstack([OCTA_V, OCTA_V + [5, 0, 0]])
    t = np.vstack([OCTA_T, OCTA_T[:, ::-1] + 6])
    with pytest.raises(GeometryError, match="opposite"):
        check_surface(v, t, "pair")


@pytest.mark.parametrize(
    "make, words",
    [
        (lambda v, t: (v, t[1:]), r"hole .* edge between vertices \d+ \("),
        (lambda v, t: (np.vstack([v, [[2, 2, 2]]]), np.vstack([t, [[0, 2, 6]]])), "non-manifold"),
        (lambda v, t: (v, np.vstack([t[:1, ::-1], t[1:]])), "mixed orientation"),
        (lambda v, t: (np.vstack([v, [[0.5, 0.5, 0]]]), np.vstack([t, [[0, 2, 6]]])), "degenerate"),
        (lambda v, t: (np.where(np.arange(6)[:, None] == 4, np.nan, v), t), "NaN"),
        (lambda v, t: (v, t[:0]), "no triangles"),
        (lambda v, t: (v, np.vstack([t, t + 6]) % 11), "outside 0..5"),
    ],
)
def test_broken_surfaces_are_named(make, words):
    v, t = make(OCTA_V.copy(), OCTA_T.copy())
    with pytest.raises(GeometryError, match=words) as info:
        check_surface(v, t, "part.stl")
    assert str(info.value).startswith("part.stl: ")


def test_sheets_touching_at_a_vertex_are_refused():
    # two octahedra sharing the vertex (1, 0, 0): every edge is fine, the vertex is not
    v = np.vstack([OCTA_V, OCTA_V + [2, 0, 0]])
    t2 = OCTA_T + 6
    t2[t2 == 7] = 0  # the second one's (1, 0, 0) corner is the first's
    with pytest.raises(GeometryError, match=r"non-manifold vertex 0 \(1, 0, 0\)"):
        check_surface(v, np.vstack([OCTA_T, t2]), "bowtie")


def test_point_triangle_distance_against_dense_sampling():
    rng = np.random.default_rng(1)
    tri = rng.normal(size=(200, 3, 3))
    pts = rng.normal(size=(200, 3)) * 2
    d = point_triangle_distance(pts, tri)
    u, w = np.meshgrid(np.linspace(0, 1, 201), np.linspace(0, 1, 201))
    keep = u + w <= 1
    bary = np.stack([1 - u[keep] - w[keep], u[keep], w[keep]], axis=1)  # (m, 3)
    samples = np.einsum("mk,nkj->nmj", bary, tri)
    brute = np.linalg.norm(samples - pts[:, None], axis=2).min(axis=1)
    assert np.all(d <= brute + 1e-12)
    assert np.allclose(d, brute, atol=0.01 * np.linalg.norm(np.ptp(tri, axis=1), axis=1).max())


def test_nearest_on_surface_and_winding_number():
    pts = np.array([[0, 0, 0], [0.1, 0.2, 0.1], [2, 0, 0], [0, 0, -3]])
    wn = winding_number(pts, OCTA_V, OCTA_T)
    assert wn == pytest.approx([1, 1, 0, 0], abs=1e-12)
    d, which = nearest_on_surface(pts, OCTA_V, OCTA_T, reach=1.5)
    # |x| + |y| + |z| = 1 is the surface: distance (1 - |p|_1) / sqrt(3) inside
    assert d[:2] == pytest.approx([1 / np.sqrt(3), 0.6 / np.sqrt(3)])
    assert d[2] == pytest.approx(1.0) and which[2] >= 0
    assert np.isinf(d[3]) and which[3] == -1


def test_no_notice_for_good_surfaces():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        check_surface(OCTA_V, OCTA_T, "octa")

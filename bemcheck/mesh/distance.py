"""Distances from points to a triangle surface, and whether points lie inside it."""

import numpy as np
from scipy.spatial import cKDTree

_CHUNK = 2_000_000   # point-triangle pairs per block, to bound memory


def _segment_distance(p, a, b):
    ab = b - a
    t = np.clip(np.einsum("ij,ij->i", p - a, ab) / np.einsum("ij,ij->i", ab, ab), 0.0, 1.0)
    return np.linalg.norm(p - a - t[:, None] * ab, axis=1)


def point_triangle_distance(points, corners):
    """Distance from each point to the matching triangle.

    Parameters
    ----------
    points : (n, 3) ndarray
        Points [m].
    corners : (n, 3, 3) ndarray
        Triangle corners [m], one triangle per point.

    Returns
    -------
    (n,) ndarray
        Euclidean distances [m]: to the plane when the foot lies inside the
        triangle, otherwise to the nearest of its three edges.

    Examples
    --------
    >>> tri = np.array([[[0.0, 0, 0], [1, 0, 0], [0, 1, 0]]] * 2)
    >>> point_triangle_distance(np.array([[0.2, 0.2, 3.0], [2.0, 0, 0]]), tri).tolist()
    [3.0, 1.0]
    """
    a, b, c = corners[:, 0], corners[:, 1], corners[:, 2]
    n = np.cross(b - a, c - a)
    n /= np.linalg.norm(n, axis=1)[:, None]
    d = np.einsum("ij,ij->i", points - a, n)
    foot = points - d[:, None] * n
    inside = np.ones(len(points), dtype=bool)
    for u, w in ((a, b), (b, c), (c, a)):
        inside &= np.einsum("ij,ij->i", np.cross(w - u, foot - u), n) >= 0.0
    edge = np.minimum(np.minimum(_segment_distance(points, a, b), _segment_distance(points, b, c)),
                      _segment_distance(points, c, a))
    return np.where(inside, np.abs(d), edge)


def nearest_on_surface(points, vertices, triangles, reach):
    """Distance from each point to a surface, for points within ``reach`` of it.

    Parameters
    ----------
    points : (n, 3) array_like
        Query points [m].
    vertices : (nv, 3) ndarray
    triangles : (nt, 3) ndarray of int
    reach : float
        Points farther than this from every triangle get ``inf`` [m].

    Returns
    -------
    distance : (n,) ndarray
        Distance to the nearest triangle [m], or inf beyond ``reach``.
    triangle : (n,) ndarray of int
        That triangle's index (-1 beyond ``reach``).
    """
    points = np.atleast_2d(np.asarray(points, dtype=float))
    p = vertices[triangles]
    centre = p.mean(axis=1)
    radius = np.linalg.norm(p - centre[:, None], axis=2).max()
    tree = cKDTree(centre)
    best = np.full(len(points), np.inf)
    which = np.full(len(points), -1, dtype=np.int64)
    near = tree.query_ball_point(points, reach + radius)
    qi = np.repeat(np.arange(len(points)), [len(n) for n in near])
    ti = np.fromiter((t for n in near for t in n), dtype=np.int64, count=qi.size)
    for s in range(0, qi.size, _CHUNK):
        q, t = qi[s:s + _CHUNK], ti[s:s + _CHUNK]
        d = point_triangle_distance(points[q], p[t])
        order = np.lexsort((d, q))
        q, t, d = q[order], t[order], d[order]
        first = np.r_[True, q[1:] != q[:-1]]
        q, t, d = q[first], t[first], d[first]
        better = (d < best[q]) & (d <= reach)
        best[q[better]], which[q[better]] = d[better], t[better]
    return best, which


def winding_number(points, vertices, triangles):
    """Generalised winding number of a closed outward surface about each point.

    About 1 inside, 0 outside (exactly so up to round-off for a closed
    surface), from the solid angles of the triangles (Van Oosterom &
    Strackee 1983, IEEE Trans. Biomed. Eng. 30, 125, eq. 8).

    Examples
    --------
    >>> v = np.array([[0.0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1]])
    >>> t = np.array([[0, 2, 1], [0, 1, 3], [0, 3, 2], [1, 2, 3]])
    >>> winding_number([[0.1, 0.1, 0.1], [2, 2, 2]], v, t).round(12).tolist()
    [1.0, 0.0]
    """
    points = np.atleast_2d(np.asarray(points, dtype=float))
    p = vertices[triangles]
    out = np.zeros(len(points))
    step = max(1, _CHUNK // max(1, len(triangles)))
    for s in range(0, len(points), step):
        x = points[s:s + step, None, None, :]
        r = p[None] - x                                    # (m, nt, 3, 3)
        ln = np.linalg.norm(r, axis=3)
        a, b, c = r[..., 0, :], r[..., 1, :], r[..., 2, :]
        num = np.einsum("mtk,mtk->mt", a, np.cross(b, c))
        den = (ln[..., 0] * ln[..., 1] * ln[..., 2]
               + np.einsum("mtk,mtk->mt", a, b) * ln[..., 2]
               + np.einsum("mtk,mtk->mt", b, c) * ln[..., 0]
               + np.einsum("mtk,mtk->mt", c, a) * ln[..., 1])
        out[s:s + step] = 2.0 * np.arctan2(num, den).sum(axis=1) / (4.0 * np.pi)
    return out

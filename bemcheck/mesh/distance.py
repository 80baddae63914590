"""Distances from points to a triangle surface, and whether points lie inside it."""

import numpy as np
from scipy.spatial import cKDTree

from bemcheck.mesh.triangles import point_triangle_distance, solid_angles

_CHUNK = 2_000_000  # point-triangle pairs per block, to bound memory


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
        q, t = qi[s : s + _CHUNK], ti[s : s + _CHUNK]
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
    surface), from the solid angles of the triangles
    (:func:`~bemcheck.mesh.triangles.solid_angles`).

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
        # outward triangles subtend -4π in all from inside (solid_angles is positive on the normal's side)
        out[s : s + step] = -solid_angles(points[s : s + step, None, :], p[None]).sum(axis=1) / (4.0 * np.pi)
    return out

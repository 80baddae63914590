"""Points and plane triangles: the nearest point of a triangle, the solid angle it subtends, its aspect ratio.

The one place for these formulas; the mesher (distances, inside tests, the
band table of ``bemcheck mesh``), the solver (near-field quadrature, the
double layer's jump) and the report's mesh table use them.
"""

import numpy as np


def closest_points(points, a, b, c):
    """Closest point of each triangle to each point.

    Ericson, Real-Time Collision Detection, 2005, sec. 5.1.5, vectorised.

    Parameters
    ----------
    points : (n, 3) ndarray
        Query points [m].
    a, b, c : (n, 3) ndarray
        Triangle corners [m], paired row by row with ``points``.

    Returns
    -------
    distance : (n,) ndarray
        Distance to the triangle [m].
    bary : (n, 3) ndarray
        Barycentric coordinates of the closest point.

    Examples
    --------
    >>> d, w = closest_points(np.array([[0.2, 0.2, 1.0]]), np.zeros((1, 3)),
    ...                       np.array([[1.0, 0, 0]]), np.array([[0, 1.0, 0]]))
    >>> float(d[0]), w.round(3).tolist()
    (1.0, [[0.6, 0.2, 0.2]])
    """
    ab, ac = b - a, c - a
    ap, bp, cp = points - a, points - b, points - c

    def dot(u, v):
        return np.einsum("ij,ij->i", u, v)

    d1, d2 = dot(ab, ap), dot(ac, ap)
    d3, d4 = dot(ab, bp), dot(ac, bp)
    d5, d6 = dot(ab, cp), dot(ac, cp)
    va, vb, vc = d3 * d6 - d5 * d4, d5 * d2 - d1 * d6, d1 * d4 - d3 * d2
    with np.errstate(divide="ignore", invalid="ignore"):
        denom = va + vb + vc
        v, w = vb / denom, vc / denom
        bary = np.stack([1.0 - v - w, v, w], axis=1)
        # Ericson tests the regions in order and returns at the first match:
        # apply them from last to first so that earlier ones win.
        regions = [
            (d1 <= 0) & (d2 <= 0),
            (d3 >= 0) & (d4 <= d3),
            (vc <= 0) & (d1 >= 0) & (d3 <= 0),
            (d6 >= 0) & (d5 <= d6),
            (vb <= 0) & (d2 >= 0) & (d6 <= 0),
            (va <= 0) & (d4 - d3 >= 0) & (d5 - d6 >= 0),
        ]
        t_ab = d1 / (d1 - d3)
        t_ac = d2 / (d2 - d6)
        t_bc = (d4 - d3) / ((d4 - d3) + (d5 - d6))
        values = [
            np.array([1.0, 0.0, 0.0]) + 0 * bary,
            np.array([0.0, 1.0, 0.0]) + 0 * bary,
            np.stack([1.0 - t_ab, t_ab, 0 * t_ab], axis=1),
            np.array([0.0, 0.0, 1.0]) + 0 * bary,
            np.stack([1.0 - t_ac, 0 * t_ac, t_ac], axis=1),
            np.stack([0 * t_bc, 1.0 - t_bc, t_bc], axis=1),
        ]
    for mask, value in zip(regions[::-1], values[::-1]):
        bary = np.where(mask[:, None], value, bary)
    nearest = bary[:, :1] * a + bary[:, 1:2] * b + bary[:, 2:] * c
    return np.linalg.norm(points - nearest, axis=1), bary


def solid_angles(points, corners):
    """Signed solid angles of triangles seen from points, positive on the side the normal points to.

    Van Oosterom & Strackee (1983), The solid angle of a plane triangle,
    IEEE Trans. Biomed. Eng. 30(2), 125-126, eq. 8.

    Parameters
    ----------
    points : (..., 3) ndarray
    corners : (..., 3, 3) ndarray
        Counter-clockwise corners, broadcast against ``points``.

    Returns
    -------
    (...) ndarray
        [sr]; ∫_T ∂G_0/∂n_y dS_y = Ω/(4π).

    Examples
    --------
    >>> tri = np.array([[1.0, 0, 0], [0, 1, 0], [0, 0, 1]])   # normal toward +(1, 1, 1)
    >>> round(float(solid_angles(np.zeros(3), tri) / (4 * np.pi)), 6)  # an octant, from behind
    -0.125
    """
    r = np.asarray(corners) - np.asarray(points)[..., None, :]
    n = np.linalg.norm(r, axis=-1)
    a, b, c = r[..., 0, :], r[..., 1, :], r[..., 2, :]
    num = np.einsum("...k,...k->...", a, np.cross(b, c))
    den = (
        n[..., 0] * n[..., 1] * n[..., 2]
        + np.einsum("...k,...k->...", a, b) * n[..., 2]
        + np.einsum("...k,...k->...", a, c) * n[..., 1]
        + np.einsum("...k,...k->...", b, c) * n[..., 0]
    )
    return -2.0 * np.arctan2(num, den)


def point_triangle_distance(points, corners):
    """Distance from each point to the matching triangle [m], (n,); ``corners`` (n, 3, 3).

    Examples
    --------
    >>> tri = np.array([[[0.0, 0, 0], [1, 0, 0], [0, 1, 0]]] * 2)
    >>> point_triangle_distance(np.array([[0.2, 0.2, 3.0], [2.0, 0, 0]]), tri).tolist()
    [3.0, 1.0]
    """
    corners = np.asarray(corners, dtype=float)
    return closest_points(np.asarray(points, dtype=float), corners[:, 0], corners[:, 1], corners[:, 2])[0]


def edge_lengths(corners):
    """Lengths [m] of the edges from corner k to corner k + 1 (mod 3): (..., 3, 3) corners -> (..., 3).

    Examples
    --------
    >>> edge_lengths(np.array([[0.0, 0, 0], [3, 0, 0], [0, 4, 0]])).tolist()
    [3.0, 5.0, 4.0]
    """
    corners = np.asarray(corners, dtype=float)
    return np.linalg.norm(corners[..., [1, 2, 0], :] - corners, axis=-1)


def aspect_ratios(edge_lengths, areas):
    """Aspect ratio of each triangle: the longest edge over the shortest altitude, times √3/2.

    aspect = (√3/2) l_max / h_min = √3 l_max² / (4 A), as h_min = 2 A / l_max:
    1 for the equilateral triangle, √3 for the right isosceles one, growing
    without bound as a triangle degenerates into a needle or a cap, and
    independent of its size (the aspect ratio among the quality measures
    surveyed by Shewchuk 2002, "What is a good linear finite element?
    Interpolation, conditioning, anisotropy, and quality measures", sec. 6.3;
    from memory).

    Parameters
    ----------
    edge_lengths : (nt, 3) ndarray
        Each triangle's edge lengths [m] (``SurfaceMesh.edge_lengths()``).
    areas : (nt,) ndarray
        Each triangle's area [m²] (``SurfaceMesh.areas``).

    Returns
    -------
    (nt,) ndarray
        Dimensionless; inf for a triangle of zero area.

    Examples
    --------
    >>> aspect_ratios(np.array([[1.0, 1.0, 1.0], [1.0, 1.0, 2**0.5]]), np.array([3**0.5 / 4, 0.5])).round(12).tolist()
    [1.0, 1.732050807569]
    """
    longest = np.asarray(edge_lengths, dtype=float).max(axis=1)
    area = np.asarray(areas, dtype=float)
    with np.errstate(divide="ignore"):
        return np.where(area > 0.0, longest**2 * np.sqrt(3.0) / (4.0 * np.maximum(area, 1e-300)), np.inf)

"""Quadrature on flat triangles for integrals whose kernel peaks near a point.

Field points, sources and far-field directions are integrated against the
surface with numpy (no compiled callables): a symmetric Gauss rule on each
triangle, uniformly subdivided 4**L times when the point is close.  The
level L is chosen from the ratio of the triangle's size to the point's
distance from it, so the rule always sees the kernel as smooth.
"""

from dataclasses import dataclass
from functools import cache

import numpy as np

from bemcheck.settings import NUMERICS
from bemcheck.solvers.bem.runtime import bempp

# The measurements behind these are given in bemcheck.settings.Numerics.
BASE_ORDER, SAFE_RATIO, MAX_LEVEL = NUMERICS.base_order, NUMERICS.safe_ratio, NUMERICS.max_level


@dataclass(frozen=True, eq=False)
class Rule:
    """A quadrature rule on the reference triangle in barycentric form.

    Attributes
    ----------
    bary : (nq, 3) ndarray
        Barycentric coordinates of the points (weights of vertices 0, 1, 2).
    weights : (nq,) ndarray
        Sum to 1: the integral over a triangle of area A is A * sum(w f).
    """

    bary: np.ndarray
    weights: np.ndarray


def _lattice(n):
    """Corners (barycentric) of the n x n split of a triangle: (n^2, 3, 3)."""
    idx = {}
    nodes = []
    for i in range(n + 1):
        for j in range(n + 1 - i):
            idx[i, j] = len(nodes)
            nodes.append(((n - i - j) / n, i / n, j / n))
    nodes = np.array(nodes)
    tris = []
    for i in range(n):
        for j in range(n - i):
            tris.append((idx[i, j], idx[i + 1, j], idx[i, j + 1]))
            if i + j < n - 1:
                tris.append((idx[i + 1, j], idx[i + 1, j + 1], idx[i, j + 1]))
    return nodes[np.array(tris)]


@cache
def rule(level=0):
    """The base Gauss rule repeated on the 4**level sub-triangles of a triangle.

    Parameters
    ----------
    level : int
        Subdivision level, 0 .. MAX_LEVEL.

    Returns
    -------
    Rule
        6 * 4**level points.

    Examples
    --------
    >>> r = rule(1)
    >>> r.bary.shape, round(float(r.weights.sum()), 12)
    ((24, 3), 1.0)
    """
    base = gauss(BASE_ORDER)
    corners = _lattice(2**level)
    bary = np.einsum("qa,sab->sqb", base.bary, corners).reshape(-1, 3)
    weights = np.tile(base.weights, len(corners)) / len(corners)
    return Rule(bary, weights)


@cache
def gauss(order):
    """bempp-cl's symmetric Gauss rule of ``order`` on a triangle, in barycentric form.

    Parameters
    ----------
    order : int
        Degree of polynomials integrated exactly, 1 .. 20.

    Returns
    -------
    Rule
        Contiguous arrays, weights summing to 1.

    Examples
    --------
    >>> g = gauss(2)
    >>> g.bary.shape, round(float(g.weights.sum()), 12)
    ((3, 3), 1.0)
    """
    bempp()  # first import of bempp-cl must be the quiet one
    from bempp_cl.api.integration.triangle_gauss import rule as reference_rule

    st, w = reference_rule(order)
    bary = np.ascontiguousarray(np.stack([1.0 - st[0] - st[1], st[0], st[1]], axis=1))
    return Rule(bary, np.ascontiguousarray(2.0 * w))


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


def levels(distance, size):
    """Subdivision level that makes every sub-triangle look far from the point.

    Parameters
    ----------
    distance : ndarray
        Point-to-triangle distances [m].
    size : ndarray
        Longest edges of the triangles [m], broadcastable to ``distance``.

    Returns
    -------
    ndarray of int
        0 .. MAX_LEVEL; MAX_LEVEL where the distance is zero.

    Examples
    --------
    >>> levels(np.array([3.0, 1.0, 0.01]), 1.0).tolist()
    [0, 1, 7]
    """
    with np.errstate(divide="ignore"):
        need = np.log2(SAFE_RATIO * size / distance)
    return np.clip(np.ceil(need), 0, MAX_LEVEL).astype(int)

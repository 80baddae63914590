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

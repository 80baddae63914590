"""Colouring the triangles so that no two of one colour share a vertex: the parallel passes write without races."""

import numba
import numpy as np


def colour_triangles(triangles):
    """Group triangles so that no two of a group share a vertex.

    Triangles of one group write to disjoint rows of the matrix, so a group
    can be assembled in parallel without locks.

    Parameters
    ----------
    triangles : (nt, 3) array_like of int

    Returns
    -------
    list of (n_c,) ndarray of int
        Triangle indices per colour, every triangle exactly once.

    Examples
    --------
    >>> groups = colour_triangles([[0, 1, 2], [1, 2, 3], [4, 5, 6]])
    >>> [g.tolist() for g in groups]
    [[0, 2], [1]]
    """
    triangles = np.asarray(triangles, dtype=np.int64).reshape(-1, 3)
    if not len(triangles):
        return []
    # triangles through each vertex, as compressed rows
    corner_owner = np.repeat(np.arange(len(triangles)), 3)
    by_vertex = np.argsort(triangles.reshape(-1), kind="stable")
    indptr = np.searchsorted(triangles.reshape(-1)[by_vertex], np.arange(triangles.max() + 2))
    colours = _greedy_colours(triangles, indptr, corner_owner[by_vertex])
    order = np.argsort(colours, kind="stable")
    cuts = np.flatnonzero(np.diff(colours[order])) + 1
    return np.split(order, cuts)


@numba.njit
def _greedy_colours(triangles, indptr, through):
    """Smallest colour not taken by an already coloured triangle sharing a vertex.

    A triangle has at most 3·(m - 1) such neighbours where m triangles meet
    at a vertex, so 3·m + 1 colours always suffice (a fan of a hundred
    triangles round one vertex included).
    """
    most = 0
    for v in range(len(indptr) - 1):
        most = max(most, indptr[v + 1] - indptr[v])
    stamp = np.full(3 * most + 1, -1, dtype=np.int64)
    colours = np.full(len(triangles), -1, dtype=np.int64)
    for t in range(len(triangles)):
        for a in range(3):
            v = triangles[t, a]
            for i in range(indptr[v], indptr[v + 1]):
                c = colours[through[i]]
                if c >= 0:
                    stamp[c] = t
        c = 0
        while stamp[c] == t:
            c += 1
        colours[t] = c
    return colours


# Trial triangles whose far-rule kernels are evaluated together, in loops
# over the block that the compiler turns into vector instructions.

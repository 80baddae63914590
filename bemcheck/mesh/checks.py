"""Is a triangle soup a closed, manifold, consistently outward surface?

The BEM formulation assumes closed surfaces with outward normals (an inverted
mesh gave 670 % error in a sphere test here), so every mesh, generated or read,
passes through :func:`check_surface` before it reaches the solver.
"""

import warnings

import numpy as np
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components

from bemcheck.errors import GeometryError
from bemcheck.mesh.triangles import edge_lengths

# A triangle is degenerate when twice its area is below this fraction of its
# longest edge squared (a height of 1e-10 edges: collinear to round-off).
DEGENERATE = 1e-10


class MeshNotice(UserWarning):
    """Something in a mesh was repaired or looks suspicious, but it can be used."""


def _where(vertices, idx):
    return "(" + ", ".join(f"{c:.6g}" for c in vertices[idx]) + ")"


def _edge_message(name, vertices, edge, what, count=1):
    a, b = (int(i) for i in edge)
    more = f" ({count} such edges)" if count > 1 else ""
    return f"{name}: {what} at the edge between vertices {a} {_where(vertices, a)} and {b} {_where(vertices, b)}{more}"


def check_surface(vertices, triangles, name, repair=True):
    """Check a closed surface and return it outward-oriented.

    Parameters
    ----------
    vertices : (nv, 3) array_like
        Vertex positions [m].
    triangles : (nt, 3) array_like of int
        Vertex indices.
    name : str
        What to call the surface in messages (a file name, a body name).
    repair : bool
        Flip a surface that is inward as a whole (with a notice); False
        refuses it instead, for meshes that must already be right.

    Returns
    -------
    (nt, 3) ndarray of int
        ``triangles``, with every triangle's order reversed if the whole
        surface was consistently inward (a :class:`MeshNotice` warning says so).

    Raises
    ------
    GeometryError
        Empty, NaN or infinite coordinates, out-of-range indices, degenerate
        triangles, open (edge in one triangle) or non-manifold (edge in more
        than two triangles, or surface sheets meeting at a vertex), mixed
        orientation, or a component inside out relative to the others; the
        message names the element and where it is.

    Examples
    --------
    >>> v = [[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1]]
    >>> check_surface(v, [[0, 2, 1], [0, 1, 3], [0, 3, 2], [1, 2, 3]], "tetra").shape
    (4, 3)
    """
    v = np.asarray(vertices, dtype=float)
    t = np.asarray(triangles)
    if v.ndim != 2 or v.shape[1] != 3 or t.ndim != 2 or t.shape[1] != 3 or len(t) == 0:
        raise GeometryError(f"{name}: no triangles (expected a closed triangle surface)")
    bad = np.flatnonzero(~np.isfinite(v).all(axis=1))
    if bad.size:
        raise GeometryError(
            f"{name}: vertex {bad[0]} has a NaN or infinite coordinate {v[bad[0]].tolist()} ({bad.size} such vertices)"
        )
    t = t.astype(np.int64)
    if t.min() < 0 or t.max() >= len(v):
        raise GeometryError(f"{name}: a triangle refers to a vertex index outside 0..{len(v) - 1}")
    _check_degenerate(v, t, name)
    edges = _check_edges(v, t, name)
    _check_vertices(v, t, edges, name)
    return _orient(v, t, edges, name, repair)


def _check_degenerate(v, t, name):
    p = v[t]
    lengths = edge_lengths(p)
    twice_area = np.linalg.norm(np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]), axis=1)
    repeated = (t[:, 0] == t[:, 1]) | (t[:, 1] == t[:, 2]) | (t[:, 2] == t[:, 0])
    flat = repeated | (twice_area <= DEGENERATE * lengths.max(axis=1) ** 2)
    if flat.any():
        i = int(np.flatnonzero(flat)[0])
        corners = ", ".join(_where(v, k) for k in t[i])
        raise GeometryError(
            f"{name}: triangle {i} is degenerate (zero area; corners {corners}); "
            f"{int(flat.sum())} degenerate triangles in all"
        )


def _check_edges(v, t, name):
    """Undirected edges with their two triangles; raises on open or non-manifold edges."""
    directed = np.stack([t, np.roll(t, -1, axis=1)], axis=2).reshape(-1, 2)
    key = np.sort(directed, axis=1)
    uniq, inverse, counts = np.unique(key, axis=0, return_inverse=True, return_counts=True)
    inverse = inverse.ravel()
    if (counts > 2).any():
        j = np.flatnonzero(counts > 2)[0]
        raise GeometryError(
            _edge_message(
                name, v, uniq[j], f"non-manifold: an edge shared by {counts[j]} triangles", int((counts > 2).sum())
            )
        )
    if (counts == 1).any():
        e = uniq[np.flatnonzero(counts == 1)[0]]
        raise GeometryError(
            _edge_message(
                name, v, e, "a hole (not closed): an edge used by one triangle only", int((counts == 1).sum())
            )
        )
    order = np.argsort(inverse, kind="stable")
    pairs = order.reshape(-1, 2)  # the two directed edges of each undirected edge
    same = (directed[pairs[:, 0]] == directed[pairs[:, 1]]).all(axis=1)
    if same.any():
        e = directed[pairs[np.flatnonzero(same)[0], 0]]
        raise GeometryError(
            _edge_message(
                name,
                v,
                e,
                "mixed orientation: two neighbouring triangles run the same way along their common edge (normals flip)",
                int(same.sum()),
            )
        )
    return pairs // 3  # (ne, 2) triangle indices per edge


def _check_vertices(v, t, edge_tris, name):
    """Each vertex's triangles must form one fan (no sheets touching at a point)."""
    nt = len(t)
    # corners (triangle, k) of the same vertex are linked across each shared edge
    a, b = edge_tris[:, 0], edge_tris[:, 1]
    rows, cols = [], []
    for k in range(3):
        for m in range(3):
            same = t[a, k] == t[b, m]
            rows.append(3 * a[same] + k)
            cols.append(3 * b[same] + m)
    rows, cols = np.concatenate(rows), np.concatenate(cols)
    graph = coo_matrix((np.ones(rows.size), (rows, cols)), shape=(3 * nt, 3 * nt))
    n_fans, label = connected_components(graph, directed=False)
    used = np.unique(t)
    if n_fans != used.size:
        vertex_of_corner = t.ravel()
        fans = np.unique(np.stack([vertex_of_corner, label], axis=1), axis=0)
        vid, counts = np.unique(fans[:, 0], return_counts=True)
        bad = int(vid[np.flatnonzero(counts > 1)[0]])
        raise GeometryError(
            f"{name}: non-manifold vertex {bad} {_where(v, bad)}: separate sheets of surface meet there"
        )


def _orient(v, t, edge_tris, name, repair=True):
    nt = len(t)
    graph = coo_matrix((np.ones(len(edge_tris)), (edge_tris[:, 0], edge_tris[:, 1])), shape=(nt, nt))
    n_parts, part = connected_components(graph, directed=False)
    p = v[t]
    signed = np.einsum("ij,ij->i", p[:, 0], np.cross(p[:, 1], p[:, 2])) / 6.0
    volume = np.bincount(part, weights=signed, minlength=n_parts)
    if (volume > 0).all():
        return t
    if (volume < 0).all() and not repair:
        raise GeometryError(
            f"{name}: the surface is oriented inward (normals pointing into the body, "
            f"enclosed volume {volume.sum():.3g} m³); expected outward normals "
            "(counter-clockwise seen from outside)"
        )
    if (volume < 0).all():
        warnings.warn(
            f"{name}: the surface was oriented inward (normals pointing into the body); flipped it",
            MeshNotice,
            stacklevel=3,
        )
        return t[:, ::-1].copy()
    k = int(np.flatnonzero(volume <= 0)[0])
    i = int(np.flatnonzero(part == k)[0])
    raise GeometryError(
        f"{name}: surface part {k} (triangle {i} at {_where(v, t[i, 0])}) is "
        "oriented opposite to the others, or is a cavity inside a body; "
        "expected every part outward"
    )

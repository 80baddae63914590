"""The one surface type: triangles of closed rigid bodies, from the mesher to the solver.

The mesher builds a :class:`SurfaceMesh`; the solver takes the same type after
:func:`bemcheck.solvers.bem.surface.surface_from_mesh` has checked and
compacted it.  Derived geometry (normals, areas, sizes) is computed once, on
first use.
"""

from dataclasses import dataclass, field
from functools import cached_property

import numpy as np
from scipy.sparse import coo_matrix

from bemcheck.errors import GeometryError
from bemcheck.mesh.triangles import edge_lengths


@dataclass(frozen=True, eq=False)
class SurfaceMesh:
    """Triangles of one or more closed rigid bodies, outward-oriented.

    Parameters
    ----------
    vertices : (nv, 3) ndarray
        Vertex positions [m].
    triangles : (nt, 3) ndarray of int
        Vertex indices, counter-clockwise seen from outside (normals outward).
    domains : (nt,) ndarray of int
        Physical-group tag of each triangle (positive integers, as bempp-cl's
        domain indices).
    groups : dict[str, int]
        Name -> tag, e.g. ``{"bell": 1, "bell.mouth": 2, "cab1": 3, "cab1.driver": 4}``.
        A body's triangles carry either its own tag or one of its
        ``"<body>.<part>"`` tags.
    mesh_vertex : (nv,) ndarray of int, optional
        Index of each vertex in the mesh this one was compacted from
        (:func:`~bemcheck.solvers.bem.surface.surface_from_mesh`); None when
        it is not a compacted copy.

    Examples
    --------
    >>> v = np.array([[0.0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1]])
    >>> tetra = SurfaceMesh(v, np.array([[0, 2, 1], [0, 1, 3], [0, 3, 2], [1, 2, 3]]), np.ones(4, int))
    >>> round(tetra.enclosed_volume(), 6), round(float(tetra.areas.sum()), 4)
    (0.166667, 2.366)
    """

    vertices: np.ndarray
    triangles: np.ndarray
    domains: np.ndarray
    groups: dict = field(default_factory=dict)
    mesh_vertex: np.ndarray | None = None

    @property
    def n_vertices(self):
        return int(self.vertices.shape[0])

    @property
    def n_triangles(self):
        return int(self.triangles.shape[0])

    def corners(self, index=slice(None)):
        """(n, 3, 3) corner coordinates of the triangles ``index`` [m]."""
        return self.vertices[self.triangles[index]]

    @cached_property
    def _cross(self):
        p = self.corners()
        return np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0])

    @cached_property
    def areas(self):
        """(nt,) triangle areas [m²]."""
        return 0.5 * np.linalg.norm(self._cross, axis=1)

    @cached_property
    def normals(self):
        """(nt, 3) outward unit normals."""
        return self._cross / np.maximum(2.0 * self.areas, 1e-300)[:, None]

    def edge_lengths(self):
        """(nt, 3) lengths of each triangle's edges [m]."""
        return edge_lengths(self.corners())

    @cached_property
    def sizes(self):
        """(nt,) longest edge of each triangle [m]."""
        return self.edge_lengths().max(axis=1) if self.n_triangles else np.zeros(0)

    @property
    def element_size(self):
        """Longest edge in the mesh [m]: the coarsest resolution anywhere."""
        return float(self.sizes.max()) if self.n_triangles else 0.0

    def enclosed_volume(self, mask=None):
        """Enclosed volume [m³] by the divergence theorem; positive when outward."""
        tri = self.triangles if mask is None else self.triangles[mask]
        p = self.vertices[tri]
        return float(np.einsum("ij,ij->i", p[:, 0], np.cross(p[:, 1], p[:, 2])).sum() / 6.0)

    def tags_of_body(self, body):
        """Domain tags that belong to ``body`` (its own and its parts')."""
        return sorted(t for n, t in self.groups.items() if n == body or n.startswith(body + "."))

    def group_mask(self, name):
        """(nt,) bool: the triangles of physical group ``name``.

        Raises
        ------
        GeometryError
            When the mesh has no such group or the group has no triangles.
        """
        if name not in self.groups:
            raise GeometryError(f"mesh: no physical group {name!r}; expected one of {sorted(self.groups)}")
        mask = self.domains == self.groups[name]
        if not mask.any():
            raise GeometryError(f"mesh: physical group {name!r} has no triangles")
        return mask

    def incidence(self):
        """Sparse (3 nt, nv) map from (triangle, local corner) to vertex."""
        nt = self.n_triangles
        rows = np.arange(3 * nt)
        return coo_matrix(
            (np.ones(3 * nt), (rows, self.triangles.reshape(-1))), shape=(3 * nt, self.n_vertices)
        ).tocsr()

    def mass_matrix(self):
        """P1 mass matrix M_ij = ∫ φ_i φ_j dS, sparse (nv, nv) [m²]."""
        local = (np.ones((3, 3)) + np.eye(3)) / 12.0
        vals = self.areas[:, None, None] * local
        rows = np.repeat(self.triangles, 3, axis=1).reshape(-1)
        cols = np.tile(self.triangles, (1, 3)).reshape(-1)
        return coo_matrix((vals.reshape(-1), (rows, cols)), shape=(self.n_vertices,) * 2).tocsr()

"""The scatterer surface as the solver sees it: a checked, compacted triangle mesh."""

from dataclasses import dataclass

import numpy as np
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components

from bemcheck.errors import GeometryError


@dataclass(frozen=True, eq=False)
class Surface:
    """Triangles of closed, outward-oriented bodies with their geometry.

    Attributes
    ----------
    vertices : (nv, 3) ndarray
        Vertices used by at least one triangle [m].
    triangles : (nt, 3) ndarray of int
        Indices into ``vertices``, counter-clockwise seen from outside.
    domains : (nt,) ndarray of int
        Physical-group tag of each triangle.
    groups : dict[str, int]
        Group name -> tag.
    normals : (nt, 3) ndarray
        Outward unit normals.
    areas : (nt,) ndarray
        Triangle areas [m^2].
    sizes : (nt,) ndarray
        Longest edge of each triangle [m].
    mesh_vertex : (nv,) ndarray of int
        Index of each vertex in the mesh handed in.
    """

    vertices: np.ndarray
    triangles: np.ndarray
    domains: np.ndarray
    groups: dict
    normals: np.ndarray
    areas: np.ndarray
    sizes: np.ndarray
    mesh_vertex: np.ndarray

    @property
    def n_vertices(self):
        return int(self.vertices.shape[0])

    @property
    def n_triangles(self):
        return int(self.triangles.shape[0])

    @property
    def element_size(self):
        """Longest edge in the mesh [m]: the coarsest resolution anywhere."""
        return float(self.sizes.max()) if self.n_triangles else 0.0

    def corners(self, index=slice(None)):
        """(n, 3, 3) corner coordinates of the triangles ``index`` [m]."""
        return self.vertices[self.triangles[index]]

    def incidence(self):
        """Sparse (3 nt, nv) map from (triangle, local corner) to vertex."""
        nt = self.n_triangles
        rows = np.arange(3 * nt)
        return coo_matrix((np.ones(3 * nt), (rows, self.triangles.reshape(-1))), shape=(3 * nt, self.n_vertices)).tocsr()

    def mass_matrix(self):
        """P1 mass matrix M_ij = ∫ φ_i φ_j dS, sparse (nv, nv) [m^2]."""
        local = (np.ones((3, 3)) + np.eye(3)) / 12.0
        vals = self.areas[:, None, None] * local
        rows = np.repeat(self.triangles, 3, axis=1).reshape(-1)
        cols = np.tile(self.triangles, (1, 3)).reshape(-1)
        return coo_matrix((vals.reshape(-1), (rows, cols)), shape=(self.n_vertices,) * 2).tocsr()

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


def _check_closed(triangles, tag):
    """Every directed edge must meet its reverse exactly once (closed, consistently oriented)."""
    edges = np.concatenate([triangles[:, [0, 1]], triangles[:, [1, 2]], triangles[:, [2, 0]]])
    nv = int(triangles.max()) + 1
    code = edges[:, 0].astype(np.int64) * nv + edges[:, 1]
    reverse = edges[:, 1].astype(np.int64) * nv + edges[:, 0]
    uniq, counts = np.unique(code, return_counts=True)
    if (counts > 1).any():
        a, b = divmod(int(uniq[np.argmax(counts > 1)]), nv)
        raise GeometryError(
            f"{tag}: edge ({a}, {b}) is used twice in the same direction; "
            "expected a manifold surface with consistently oriented triangles"
        )
    open_edges = ~np.isin(reverse, uniq)
    if open_edges.any():
        a, b = edges[np.argmax(open_edges)]
        raise GeometryError(
            f"{tag}: edge ({a}, {b}) has no neighbouring triangle; "
            "expected closed bodies (give thin walls a finite thickness)"
        )


def _check_outward(vertices, triangles, tag):
    """Each connected body must enclose a positive volume (normals outward)."""
    nt = len(triangles)
    rows = np.repeat(np.arange(nt), 3)
    link = coo_matrix((np.ones(3 * nt), (rows, triangles.reshape(-1))), shape=(nt, len(vertices))).tocsr()
    n_parts, part = connected_components(link @ link.T, directed=False)
    p = vertices[triangles]
    six_v = np.einsum("ij,ij->i", p[:, 0], np.cross(p[:, 1], p[:, 2]))
    volumes = np.bincount(part, weights=six_v, minlength=n_parts) / 6.0
    bad = np.flatnonzero(volumes <= 0)
    if bad.size:
        first = int(np.flatnonzero(part == bad[0])[0])
        raise GeometryError(
            f"{tag}: the body containing triangle {first} encloses volume {volumes[bad[0]]:.3g} m^3; "
            "expected outward normals (counter-clockwise seen from outside) and a positive volume"
        )


def surface_from_mesh(mesh, tag="mesh"):
    """Check a :class:`~bemcheck.mesh.surface.SurfaceMesh` and prepare it for the solver.

    Parameters
    ----------
    mesh : SurfaceMesh
        Closed, outward-oriented bodies; may have no triangles at all.
    tag : str
        Name used in error messages (a file name, a case key).

    Returns
    -------
    Surface

    Raises
    ------
    GeometryError
        Non-finite vertices, bad indices, degenerate triangles, open or
        inconsistently oriented surfaces, inward normals.

    Examples
    --------
    >>> from bemcheck.mesh.surface import SurfaceMesh
    >>> empty = SurfaceMesh(np.zeros((0, 3)), np.zeros((0, 3), int), np.zeros(0, int))
    >>> surface_from_mesh(empty).n_triangles
    0
    """
    verts = np.asarray(mesh.vertices, dtype=float).reshape(-1, 3)
    tris = np.asarray(mesh.triangles).reshape(-1, 3)
    domains = np.asarray(mesh.domains).reshape(-1)
    if tris.size and (not np.issubdtype(tris.dtype, np.integer) or tris.min() < 0 or tris.max() >= len(verts)):
        raise GeometryError(f"{tag}: triangles: expected integer vertex indices in [0, {len(verts)})")
    if domains.shape != (len(tris),):
        raise GeometryError(f"{tag}: domains: expected one tag per triangle ({len(tris)}), got {domains.shape}")
    if not np.isfinite(verts).all():
        raise GeometryError(f"{tag}: vertex {int(np.argmax(~np.isfinite(verts).all(1)))} is not finite")
    used = np.unique(tris)
    new_index = np.full(len(verts), -1)
    new_index[used] = np.arange(len(used))
    verts_used, tris = verts[used], new_index[tris]
    p = verts_used[tris]
    cross = np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0])
    double_area = np.linalg.norm(cross, axis=1)
    sizes = np.linalg.norm(p[:, [1, 2, 0]] - p, axis=2).max(axis=1) if len(tris) else np.zeros(0)
    degenerate = double_area <= 1e-10 * sizes**2
    if degenerate.any():
        raise GeometryError(f"{tag}: triangle {int(np.argmax(degenerate))} has zero area; expected non-degenerate triangles")
    if len(tris):
        _check_closed(tris, tag)
        _check_outward(verts_used, tris, tag)
    return Surface(
        vertices=verts_used,
        triangles=tris.astype(np.int64),
        domains=domains.astype(np.int64),
        groups=dict(mesh.groups),
        normals=cross / np.maximum(double_area, 1e-300)[:, None],
        areas=0.5 * double_area,
        sizes=sizes,
        mesh_vertex=used,
    )

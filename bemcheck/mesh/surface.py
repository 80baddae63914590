"""A closed triangle surface mesh, the hand-over between geometry and the BEM solve."""

from dataclasses import dataclass, field

import numpy as np


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
    """

    vertices: np.ndarray
    triangles: np.ndarray
    domains: np.ndarray
    groups: dict = field(default_factory=dict)

    @property
    def n_vertices(self):
        return int(self.vertices.shape[0])

    @property
    def n_triangles(self):
        return int(self.triangles.shape[0])

    def tags_of_body(self, body):
        """Domain tags that belong to ``body`` (its own and its parts')."""
        return sorted(t for n, t in self.groups.items() if n == body or n.startswith(body + "."))

    def edge_lengths(self):
        """(nt, 3) lengths of each triangle's edges [m]."""
        p = self.vertices[self.triangles]
        return np.linalg.norm(p[:, [1, 2, 0]] - p, axis=2)

    def areas(self):
        """(nt,) triangle areas [m^2]."""
        p = self.vertices[self.triangles]
        return 0.5 * np.linalg.norm(np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]), axis=1)

    def enclosed_volume(self, mask=None):
        """Enclosed volume [m^3] by the divergence theorem; positive when outward."""
        tri = self.triangles if mask is None else self.triangles[mask]
        p = self.vertices[tri]
        return float(np.einsum("ij,ij->i", p[:, 0], np.cross(p[:, 1], p[:, 2])).sum() / 6.0)

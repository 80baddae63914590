"""The surface as the solver takes it: checked by the one mesh validator, and compacted."""

import numpy as np

from bemcheck.errors import GeometryError
from bemcheck.mesh.checks import check_surface
from bemcheck.mesh.surface import SurfaceMesh


def surface_from_mesh(mesh, tag="mesh"):
    """Check a :class:`~bemcheck.mesh.surface.SurfaceMesh` for the solver and drop unused vertices.

    The checks are :func:`bemcheck.mesh.checks.check_surface`'s, with no
    repair: a mesh handed to the solver must already be outward.

    Parameters
    ----------
    mesh : SurfaceMesh
        Closed, outward-oriented bodies; may have no triangles at all.
    tag : str
        Name used in error messages (a file name, a case key).

    Returns
    -------
    SurfaceMesh
        The used vertices only, with ``mesh_vertex`` giving each one's index in ``mesh``.

    Raises
    ------
    GeometryError
        Non-finite vertices, bad indices, degenerate triangles, open or
        inconsistently oriented surfaces, inward normals.

    Examples
    --------
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
    verts_used, tris = verts[used], new_index[tris].astype(np.int64)
    if len(tris):
        check_surface(verts_used, tris, tag, repair=False)
    return SurfaceMesh(verts_used, tris, domains.astype(np.int64), dict(mesh.groups), mesh_vertex=used)

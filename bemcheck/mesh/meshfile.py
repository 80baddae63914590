"""A body brought from CAD: read a surface mesh file, scale it, check it."""

import warnings
from pathlib import Path

import numpy as np

from bemcheck.errors import GeometryError
from bemcheck.mesh.checks import MeshNotice, check_surface

# A body larger than this across was probably drawn in millimetres.
LARGEST_PLAUSIBLE = 20.0


def read_mesh_file(path, scale=1.0, name=None):
    """Read a closed surface mesh, scale it to metres and check it.

    Parameters
    ----------
    path : str or Path
        Any surface mesh meshio reads: STL, OBJ, PLY, gmsh .msh, VTU...
        Triangles and quadrilaterals are used; coincident vertices are merged.
    scale : float
        Factor from file units to metres (0.001 for millimetres), > 0.
    name : str, optional
        How messages call the body; defaults to the file name.

    Returns
    -------
    vertices : (nv, 3) ndarray
        Scaled vertex positions [m] in the file's own frame.
    triangles : (nt, 3) ndarray of int
        Outward-oriented triangles (a consistently inward file is flipped,
        with a :class:`~bemcheck.mesh.checks.MeshNotice` warning).

    Raises
    ------
    GeometryError
        Missing, unreadable or empty file, bad scale, or a surface that fails
        :func:`~bemcheck.mesh.checks.check_surface`.
    """
    import meshio

    path = Path(path)
    label = f"{name} (mesh file {path})" if name else f"mesh file {path}"
    if not (np.isfinite(scale) and scale > 0):
        raise GeometryError(f"{label}: scale {scale}: expected a positive number")
    if not path.is_file():
        raise GeometryError(f"{label}: no such file")
    if path.stat().st_size == 0:
        raise GeometryError(f"{label}: the file is empty; expected a surface mesh")
    try:
        with warnings.catch_warnings():
            # meshio's STL reader first tries an ASCII file as binary and warns of overflow
            warnings.simplefilter("ignore", RuntimeWarning)
            mesh = meshio.read(path)
    except Exception as exc:  # meshio raises many kinds on bad input; all mean "unreadable"
        raise GeometryError(f"{label}: cannot read it as a surface mesh ({type(exc).__name__}: {exc})") from exc
    points = np.asarray(mesh.points, dtype=float)
    if points.size == 0:
        # meshio gives no points, rather than an error, for some cut-short files (binary STL)
        raise GeometryError(f"{label}: no points in it (cut short or corrupt?); expected a surface mesh")
    if points.ndim != 2 or points.shape[1] != 3:
        raise GeometryError(f"{label}: expected 3-D points, found shape {points.shape}")
    faces = []
    for block in mesh.cells:
        if block.type == "triangle":
            faces.append(block.data)
        elif block.type == "quad":
            q = block.data
            faces += [q[:, [0, 1, 2]], q[:, [0, 2, 3]]]
    if not faces:
        kinds = ", ".join(sorted({b.type for b in mesh.cells})) or "none"
        raise GeometryError(f"{label}: no triangles or quadrilaterals (cells found: {kinds}); expected a surface mesh")
    triangles = np.vstack(faces).astype(np.int64)
    vertices, triangles = _merge(points, triangles, label)
    vertices = vertices * scale
    triangles = check_surface(vertices, triangles, label)
    extent = float(np.linalg.norm(np.ptp(vertices, axis=0)))
    if extent > LARGEST_PLAUSIBLE:
        warnings.warn(
            f"{label}: the body is {extent:.4g} m across after scale {scale}; "
            "if the file is in millimetres, set scale = 0.001",
            MeshNotice,
            stacklevel=2,
        )
    return vertices, triangles


def _merge(points, triangles, label):
    """Merge exactly coincident vertices (STL repeats them per facet) and drop unused ones."""
    if triangles.min() < 0 or triangles.max() >= len(points):
        raise GeometryError(f"{label}: a cell refers to a point index outside 0..{len(points) - 1}")
    if not np.isfinite(points).all():
        return points, triangles  # check_surface names the bad vertex
    uniq, inverse = np.unique(points, axis=0, return_inverse=True)
    kept, tri = np.unique(inverse.ravel()[triangles], return_inverse=True)
    return uniq[kept], tri.reshape(-1, 3)

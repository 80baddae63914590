"""One body's mesh in its own frame: from a gmsh script or a file, through the cache."""

import importlib
import inspect
import warnings
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np

from bemcheck.errors import GeometryError
from bemcheck.geometry_scripts import _sizing
from bemcheck.mesh import cache
from bemcheck.mesh.checks import MeshNotice, check_surface
from bemcheck.mesh.gmsh_session import session, triangles_by_group
from bemcheck.mesh.meshfile import read_mesh_file
from bemcheck.mesh.triangles import edge_lengths

# gmsh's edges run up to about 1.4 times the size asked for (measured on
# spheres, boxes and bells here), so it is asked for this fraction of the
# target; a mesh with a longer edge is made again, finer, up to RETRIES times.
GMSH_SIZE_FACTOR = 0.7
RETRIES = 2
# A mesh whose area or volume misses the solid's by more than
# _sizing.CHECKED_WITHIN is made again with a smaller allowed deviation, up to
# GEOMETRY_RETRIES times; the deviation is cut in proportion to the error
# (both vary as the sagitta) with this margin.
GEOMETRY_RETRIES = 4
GEOMETRY_MARGIN = 0.95
# Vertices where a face turns further than this from the vertex normal sit on
# a crease (a bell's throat edge, a box's sharp edge) and are not moved.
CREASE_DEG = 30.0


@dataclass(frozen=True, eq=False)
class BodyMesh:
    """A body's closed, outward surface in its own frame (axis +z).

    Parameters
    ----------
    vertices : (nv, 3) ndarray
        Positions [m] in the body frame.
    triangles : (nt, 3) ndarray of int
    parts : (nt,) ndarray of int
        Index into ``part_names`` of each triangle.
    part_names : tuple of str
        ``""`` for the body's plain surface, else a part such as ``"mouth"``.
    notices : tuple of str
        Warnings raised while making the mesh (repeated when read from the cache).
    """

    vertices: np.ndarray
    triangles: np.ndarray
    parts: np.ndarray
    part_names: tuple
    notices: tuple = ()


def _script(name):
    # the scripts import gmsh only when building, so a cached mesh needs no gmsh
    return importlib.import_module(f"bemcheck.geometry_scripts.{name}")


@dataclass(frozen=True)
class _Attempt:
    """How one gmsh run went against its targets: longest edge [m], relative area and volume errors."""

    longest: float
    area_error: float
    volume_error: float

    @property
    def geometry_error(self):
        return max(abs(self.area_error), abs(self.volume_error))


def _measure(vertices, triangles, exact):
    p = vertices[triangles]
    longest = float(edge_lengths(p).max())
    area = 0.5 * float(np.linalg.norm(np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]), axis=1).sum())
    # divergence theorem; outward gmsh triangles give a positive volume
    volume = float(np.einsum("ij,ij->i", p[:, 0], np.cross(p[:, 1], p[:, 2])).sum()) / 6.0
    return _Attempt(longest, area / exact[0] - 1.0, volume / exact[1] - 1.0)


def straddle(vertices, triangles, parts):
    """Move each vertex outward by the mean depth of its facets below a smooth surface.

    Flat triangles with their corners on a curved surface lie inside it and
    lose volume and area.  For a triangle of side s on a surface of principal
    curvatures k1, k2 the linear interpolant lies (k1 + k2) s^2 / 16 below the
    surface on average, while the mean of a vertex's six neighbours lies
    (k1 + k2) s^2 / 4 below the vertex (second-order Taylor expansion of the
    surface over an equilateral patch; derived here): moving every vertex out
    by a quarter of the normal part of its umbrella vector (mean of the
    neighbours minus the vertex) puts the facets across the surface, so the
    mesh keeps the solid's volume to leading order.  Vertices on a crease
    (CREASE_DEG) or on the border between two parts (a piston face and its
    wall) stay where they are.

    Parameters
    ----------
    vertices : (nv, 3) ndarray
        On the surface [m].
    triangles : (nt, 3) ndarray of int
        Outward oriented.
    parts : (nt,) ndarray of int
        Part of each triangle.

    Returns
    -------
    (nv, 3) ndarray
        The moved vertices [m].

    Examples
    --------
    >>> t = np.array([[0, 1, 2], [0, 2, 3], [0, 3, 4], [0, 4, 1]])
    >>> v = np.array([[0, 0, 1], [1, 0, 0.8], [0, 1, 0.8], [-1, 0, 0.8], [0, -1, 0.8]])
    >>> straddle(v, t, np.zeros(4, int))[0].round(3).tolist()   # the apex of a cap rises by 0.2 / 4
    [0.0, 0.0, 1.05]
    """
    p = vertices[triangles]
    face = np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0])
    normal = np.zeros_like(vertices)
    for k in range(3):
        np.add.at(normal, triangles[:, k], face)
    normal /= np.linalg.norm(normal, axis=1, keepdims=True)
    edges = np.unique(
        np.sort(np.concatenate([triangles[:, [0, 1]], triangles[:, [1, 2]], triangles[:, [2, 0]]]), axis=1), axis=0
    )
    total, count = np.zeros_like(vertices), np.zeros(len(vertices))
    for a, b in ((0, 1), (1, 0)):
        np.add.at(total, edges[:, a], vertices[edges[:, b]])
        np.add.at(count, edges[:, a], 1.0)
    umbrella = total / count[:, None] - vertices
    unit = face / np.linalg.norm(face, axis=1, keepdims=True)
    turn = np.ones(len(vertices))
    first_part = np.full(len(vertices), -1)
    border = np.zeros(len(vertices), dtype=bool)
    for k in range(3):
        i = triangles[:, k]
        np.minimum.at(turn, i, np.einsum("ij,ij->i", unit, normal[i]))
        first_part[i] = parts
    for k in range(3):
        np.logical_or.at(border, triangles[:, k], first_part[triangles[:, k]] != parts)
    fixed = border | (turn < np.cos(np.radians(CREASE_DEG)))
    depth = -0.25 * np.einsum("ij,ij->i", umbrella, normal)
    depth[fixed] = 0.0
    return vertices + depth[:, None] * normal


def _generate(body, element_size, refine=1.0, refinements=()):
    label = f"body '{body.name}' ({body.kind})"
    script, params = _script(body.shape.SCRIPT), body.shape.script_args()
    try:
        exact = script.solid_measures(*params)
    except ValueError as exc:
        raise GeometryError(f"{label}: {exc}") from exc
    factor, scale = GMSH_SIZE_FACTOR, 1.0
    target = element_size / refine
    # gmsh overshoots a local size as it does the band's
    asked = tuple(replace(r, size=r.size * GMSH_SIZE_FACTOR) for r in refinements)
    # A uniformly refined (or coarsened) mesh keeps the band mesh's geometry
    # error scaled as its sizes squared (P1 facets err as h²κ): an error-check
    # mesh 1.5× coarser must be that much coarser in its geometry too, or the
    # two meshes would agree where the geometry sets the sizes.
    within = _sizing.CHECKED_WITHIN / refine**2
    for _ in range(RETRIES + GEOMETRY_RETRIES + 1):
        vertices, triangles, group, names = _run_script(
            script, params, body, element_size * factor, scale, refine, asked
        )
        vertices = straddle(vertices, triangles, group)
        got = _measure(vertices, triangles, exact)
        long_edge = got.longest > target
        off_shape = got.geometry_error > within
        if not (long_edge or off_shape):
            break
        if long_edge:
            factor *= 0.97 * target / got.longest
        if off_shape:
            scale *= GEOMETRY_MARGIN * within / got.geometry_error
    if got.longest > target:
        warnings.warn(
            f"{label}: its longest edge is {got.longest:.3g} m, above the target "
            f"{target:.3g} m after {RETRIES} finer attempts",
            MeshNotice,
            stacklevel=3,
        )
    if got.geometry_error > _sizing.TOLERANCE / refine**2:
        warnings.warn(
            f"{label}: its mesh misses the solid's area by {100 * got.area_error:+.2f} % "
            f"and its volume by {100 * got.volume_error:+.2f} % after "
            f"{GEOMETRY_RETRIES} finer attempts (aimed within "
            f"{100 * _sizing.TOLERANCE / refine**2:g} %)",
            MeshNotice,
            stacklevel=3,
        )
    if refinements:
        warnings.warn(
            f"{label}: finer elements round {len(refinements)} source or observer point(s) close to its surface, "
            f"down to {min(r.size for r in refinements) / refine:.3g} m",
            MeshNotice,
            stacklevel=3,
        )
    triangles = check_surface(vertices, triangles, label)
    part_names = tuple("" if n == "wall" else n for n in names)
    return vertices, triangles, group, part_names


def _run_script(script, params, body, gmsh_size, scale, refine=1.0, refinements=()):
    label = f"body '{body.name}' ({body.kind})"
    with session(body.name) as gmsh:
        try:
            script.build(*params, gmsh_size, scale, refinements=refinements)
            # A uniform refinement scales every size the script set, the
            # geometric bounds included, so a self-check mesh is finer everywhere.
            gmsh.option.setNumber("Mesh.MeshSizeFactor", 1.0 / refine)
        except ValueError as exc:
            raise GeometryError(f"{label}: {exc}") from exc
        except Exception as exc:  # OpenCASCADE failures come as bare Exception
            raise GeometryError(f"{label}: gmsh could not build the shape ({exc})") from exc
        try:
            gmsh.model.mesh.generate(2)
        except Exception as exc:  # gmsh raises bare Exception with its log line
            raise GeometryError(f"{label}: gmsh could not mesh it at element size {gmsh_size:.4g} m ({exc})") from exc
        return triangles_by_group(gmsh)


def _file_path(shape, base_dir):
    path = Path(shape.path)
    if not path.is_absolute() and base_dir is not None:
        path = Path(base_dir) / path
    return path


def mesh_key(body, element_size, base_dir=None, refine=1.0, refinements=()):
    """Cache key of ``body`` meshed at ``element_size``, ``refine`` and ``refinements`` (a hex string)."""
    if body.shape.SCRIPT is None:
        path = _file_path(body.shape, base_dir)
        try:
            blob = path.read_bytes()
        except OSError as exc:
            raise GeometryError(f"body '{body.name}' (mesh file {path}): cannot read it ({exc.strerror})") from exc
        return cache.digest("file", body.shape, None, [blob])
    sources = [inspect.getsource(_script(body.shape.SCRIPT)).encode(), inspect.getsource(_sizing).encode()]
    extra = {
        "gmsh_size_factor": GMSH_SIZE_FACTOR,
        "retries": RETRIES,
        "sizing_rule": _sizing.SIZING_RULE,
        "geometry_retries": GEOMETRY_RETRIES,
        "geometry_margin": GEOMETRY_MARGIN,
        "crease_deg": CREASE_DEG,
    }
    if refine != 1.0:
        extra["refine"] = float(refine)
    if refinements:
        extra["refinements"] = [[*map(float, r.centre), float(r.reach), float(r.size)] for r in refinements]
    return cache.digest(body.kind, body.shape, element_size, sources, extra)


def mesh_body(body, element_size, cache_dir=None, base_dir=None, refine=1.0, refinements=()):
    """Mesh one body in its own frame, or take it from the cache.

    Parameters
    ----------
    body : bemcheck.case.model.Body
    element_size : float
        Largest element edge wanted [m] (file bodies are used as they are).
    cache_dir : str or Path, optional
        Cache folder; default :func:`bemcheck.mesh.cache.default_cache_dir`.
    base_dir : str or Path, optional
        Folder that relative mesh-file paths are relative to (the case file's).
    refine : float
        Uniform refinement: every element size, the geometric bounds
        included, divided by it (file bodies are used as they are).
    refinements : sequence of bemcheck.geometry_scripts._sizing.Refinement
        Finer elements round points close to the surface, in the body's
        frame (scripted bodies only; see :mod:`bemcheck.mesh.refine`).

    Returns
    -------
    BodyMesh
    """
    cache_dir = cache.default_cache_dir() if cache_dir is None else Path(cache_dir)
    key = mesh_key(body, element_size, base_dir, refine, refinements)
    stored = cache.load(cache_dir, key)
    if stored is not None:
        mesh = BodyMesh(
            stored["vertices"],
            stored["triangles"],
            stored["parts"],
            tuple(str(n) for n in stored["part_names"]),
            tuple(str(n) for n in stored["notices"]),
        )
        for text in mesh.notices:
            warnings.warn(text, MeshNotice, stacklevel=2)
        return mesh
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", MeshNotice)
        if body.shape.SCRIPT is None:
            path = _file_path(body.shape, base_dir)
            vertices, triangles = read_mesh_file(path, body.shape.scale, f"body '{body.name}'")
            parts, part_names = np.zeros(len(triangles), dtype=np.int64), ("",)
        else:
            vertices, triangles, parts, part_names = _generate(body, element_size, refine, refinements)
    notices = []
    for w in caught:
        if issubclass(w.category, MeshNotice):
            notices.append(str(w.message))
        warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    mesh = BodyMesh(vertices, triangles, parts, part_names, tuple(notices))
    cache.store(
        cache_dir,
        key,
        {
            "vertices": vertices,
            "triangles": triangles,
            "parts": parts,
            "part_names": np.array(part_names, dtype=str),
            "notices": np.array(notices, dtype=str),
        },
    )
    return mesh

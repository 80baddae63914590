"""All bodies of a case in one surface mesh, and the clearances the BEM solve needs."""

from itertools import combinations
from pathlib import Path

import numpy as np

from bemcheck.errors import GeometryError
from bemcheck.frames import place
from bemcheck.mesh.bands import REFUSED_BELOW
from bemcheck.mesh.bodies import mesh_body
from bemcheck.mesh.distance import nearest_on_surface, winding_number
from bemcheck.mesh.estimate import check_mesh_size
from bemcheck.mesh.floor import check_floor_clearance
from bemcheck.mesh.refine import local_refinements
from bemcheck.mesh.surface import SurfaceMesh
from bemcheck.mesh.triangles import edge_lengths
from bemcheck.settings import NUMERICS

# Sources closer to a surface than this fraction of the nearest element's
# longest edge are refused, before any solve (the solver's own limit).
SOURCE_MARGIN = NUMERICS.source_gap
# Meshes made round close monopoles, each measuring the distance again on
# the finer facets (the first, on the band's facets, errs by their sagitta).
REFINE_ROUNDS = 3


def _fmt(p):
    return "(" + ", ".join(f"{c:.4g}" for c in p) + ")"


def mesh_scene(case, element_size, cache_dir=None, check=True, refine=1.0):
    """Mesh every body of ``case`` and place it in the scene.

    Parameters
    ----------
    case : bemcheck.case.model.Case
    element_size : float
        Largest element edge [m] (see :func:`~bemcheck.mesh.bands.plan_bands`).
    cache_dir : str or Path, optional
        Mesh cache folder (default ``$XDG_CACHE_HOME/bemcheck/meshes``).
    check : bool
        Run :func:`check_clearances` on the result.
    refine : float
        Uniform refinement factor (see :func:`~bemcheck.mesh.bodies.mesh_body`):
        1.5 makes the self-check mesh, finer everywhere.

    Returns
    -------
    SurfaceMesh
        Bodies in case order; each body's plain surface has its own tag and each
        part (``"bell.mouth"``, ``"cab1.driver"``) its own, numbered from 1.

    Raises
    ------
    GeometryError
        No bodies, a body that cannot be meshed, a file body too coarse for
        the case (fewer than REFUSED_BELOW elements per wavelength at its
        highest frequency), a monopole closer to a body than
        ``NUMERICS.closest_source``, or a clearance check failing.

    Notes
    -----
    A scripted body gets finer elements round each monopole that stands
    closer to it than ``NUMERICS.refine_below`` elements
    (:func:`~bemcheck.mesh.refine.local_refinements`).
    """
    if not case.bodies:
        raise GeometryError(f"{case.path or case.title}: no bodies to mesh")
    check_mesh_size(case, element_size, refine)  # before gmsh: a scene too large is refused in seconds
    base_dir = Path(case.path).parent if case.path else None
    vertices, triangles, domains, groups = [], [], [], {}
    offset = 0
    for body in case.bodies:
        spots, bm = _refinements(case, body, element_size, cache_dir, base_dir)
        if refine != 1.0:
            bm = mesh_body(body, element_size, cache_dir, base_dir, refine, spots)
        if body.shape.SCRIPT is None:
            _check_resolution(case, body, bm)
        tags = []
        for part in bm.part_names:
            name = body.name if part == "" else f"{body.name}.{part}"
            groups[name] = len(groups) + 1
            tags.append(groups[name])
        vertices.append(place(bm.vertices, body.at, body.axis))
        triangles.append(bm.triangles + offset)
        domains.append(np.asarray(tags)[bm.parts])
        offset += len(bm.vertices)
    mesh = SurfaceMesh(np.vstack(vertices), np.vstack(triangles), np.concatenate(domains), groups)
    if check:
        check_clearances(case, mesh, element_size)
    return mesh


def _refinements(case, body, element_size, cache_dir, base_dir):
    """The body's refinements round close monopoles and its band mesh made with them.

    Decided on the band mesh (``refine`` 1), so that the error check's
    coarser mesh is refined round the same points.
    """
    spots = ()
    bm = mesh_body(body, element_size, cache_dir, base_dir)
    if body.shape.SCRIPT is None:
        return spots, bm
    for _ in range(REFINE_ROUNDS):
        more = local_refinements(case, body, bm, spots)
        if [r.size for r in more] == [r.size for r in spots]:
            break
        spots = more
        bm = mesh_body(body, element_size, cache_dir, base_dir, 1.0, spots)
    return spots, bm


def check_file_bodies(case, cache_dir=None):
    """Read every file body and refuse, before any solve, one too coarse for the case.

    A file body keeps the mesh it was drawn with, whatever a band asks for,
    so the case's highest frequency decides.

    Parameters
    ----------
    case : Case
    cache_dir : str or Path, optional
        Mesh cache folder.

    Raises
    ------
    GeometryError
        A file that cannot be read or checked, or whose longest edge gives
        fewer than REFUSED_BELOW elements per wavelength at the highest frequency.
    """
    base_dir = Path(case.path).parent if case.path else None
    for body in case.bodies:
        if body.shape.SCRIPT is None:
            _check_resolution(case, body, mesh_body(body, 0.0, cache_dir, base_dir))


def _check_resolution(case, body, bm):
    """Refuse a file body's mesh with fewer than REFUSED_BELOW elements per wavelength at the top frequency."""
    c = case.medium.speed_of_sound
    top = max(case.frequencies)
    p = bm.vertices[bm.triangles]
    longest = float(edge_lengths(p).max())
    per_wavelength = c / top / longest
    if per_wavelength < REFUSED_BELOW:
        reach = c / (REFUSED_BELOW * longest)
        raise GeometryError(
            f"body '{body.name}' (mesh file {body.shape.path}): too coarse for {top:.0f} Hz: its "
            f"longest edge {longest:.3g} m gives {per_wavelength:.3g} elements per wavelength; "
            f"expected at least {REFUSED_BELOW:g}, which this mesh gives up to {reach:.3g} Hz: "
            f"give the file a finer mesh, or run only frequencies up to {reach:.3g} Hz (--frequencies)"
        )


def _body_surface(mesh, name):
    mask = np.isin(mesh.domains, mesh.tags_of_body(name))
    return mesh.triangles[mask]


def _inside(points, vertices, triangles):
    return winding_number(points, vertices, triangles) > 0.5


def check_clearances(case, mesh, element_size, source_margin=None):
    """Refuse bodies too close together and sources or observers in or on a body.

    Parameters
    ----------
    case : Case
    mesh : SurfaceMesh
        From :func:`mesh_scene`, with a group per body name.
    element_size : float
        The mesh's target element size [m], for a quick test of far-apart bodies.
        Bodies must be at least half an element apart, where "an element" is the
        longest edge of the triangles at their closest points.
    source_margin : float, optional
        Smallest distance from a point source to a surface [m]; by default
        SOURCE_MARGIN times the longest edge of the nearest triangle.  Piston
        sources sit on a surface by design and are not checked.

    Raises
    ------
    GeometryError
        Naming the two bodies and their gap, the source / observer and the body, or a body
        too close to the floor (:func:`~bemcheck.mesh.floor.check_floor_clearance`).
    """
    check_floor_clearance(case, mesh)
    v = mesh.vertices
    surfaces = {b.name: _body_surface(mesh, b.name) for b in case.bodies}
    for a, b in combinations(case.bodies, 2):
        _check_pair(a.name, b.name, v, surfaces[a.name], surfaces[b.name], element_size)
    for i, src in enumerate(case.sources):
        if src.radiator == "piston":
            continue
        for name, tri in surfaces.items():
            _check_point(f"{case.path}: source[{i}].at: source '{src.name}'", src.position, name, v, tri, source_margin)
    for obs in case.observers.points:
        for name, tri in surfaces.items():
            if _inside([obs.at], v, tri)[0] and not _on_surface(obs.at, v, tri):
                raise GeometryError(
                    f"observer point '{obs.name}' at {_fmt(obs.at)} is inside "
                    f"body '{name}'; expected a point in the air"
                )
    measured = [(f"note[{i}]", n) for i, n in enumerate(case.played)]
    measured += [(f"source[{i}].spectrum", s.spectrum) for i, s in enumerate(case.sources) if s.spectrum is not None]
    for key, note in measured:
        for name, tri in surfaces.items():
            if note.at is not None and _inside([note.at], v, tri)[0]:
                raise GeometryError(
                    f"{case.path}: {key}.distance: the point the levels of '{note.name}' were "
                    f"measured at ({note.distance:g} m from the primary along {key}.direction) "
                    f"at {_fmt(note.at)} is inside body '{name}'; expected a point in the air"
                )


def _on_surface(point, v, tri):
    """A point inside the facets by less than ``NUMERICS.snap_inside`` of an element is on the solid's surface.

    Flat facets cut a curved surface, so a point on the solid (an ear on a
    head) may lie just inside them; the solver takes the surface pressure
    there.
    """
    corners = v[tri]
    longest = edge_lengths(corners).max(axis=1)
    d, which = nearest_on_surface([point], v, tri, reach=NUMERICS.snap_inside * float(longest.max()))
    return bool(which[0] >= 0 and d[0] <= NUMERICS.snap_inside * longest[which[0]])


def _check_pair(a, b, v, ta, tb, h):
    ia, ib = np.unique(ta), np.unique(tb)
    lo_a, hi_a = v[ia].min(axis=0), v[ia].max(axis=0)
    lo_b, hi_b = v[ib].min(axis=0), v[ib].max(axis=0)
    if (lo_a > hi_b + h).any() or (lo_b > hi_a + h).any():
        return  # boxes far apart
    for name, other, pts, tri in ((a, b, ia, tb), (b, a, ib, ta)):
        lo, hi = v[np.unique(tri)].min(axis=0), v[np.unique(tri)].max(axis=0)
        candidates = pts[((v[pts] >= lo) & (v[pts] <= hi)).all(axis=1)]
        inside = _inside(v[candidates], v, tri) if candidates.size else np.zeros(0, bool)
        if inside.any():
            p = v[candidates[np.flatnonzero(inside)[0]]]
            raise GeometryError(
                f"bodies '{a}' and '{b}' intersect: a point of '{name}' at "
                f"{_fmt(p)} lies inside '{other}'; expected separate bodies"
            )
    # "half an element" is local: the bodies' own refinement, not the band's h
    longest = _vertex_edge_lengths(v, np.vstack([ta, tb]))
    reach = 0.5 * float(longest.max())
    worst = None
    for pts, tri in ((ia, tb), (ib, ta)):
        d, which = nearest_on_surface(v[pts], v, tri, reach=reach)
        found = which >= 0
        if not found.any():
            continue
        c = v[tri[which[found]]]
        local = np.maximum(edge_lengths(c).max(axis=1), longest[pts[found]])
        k = np.argmin(d[found] - 0.5 * local)
        if d[found][k] < 0.5 * local[k] and (worst is None or d[found][k] < worst[0]):
            worst = (float(d[found][k]), float(local[k]))
    if worst is not None:
        gap, local = worst
        raise GeometryError(
            f"bodies '{a}' and '{b}' are {gap:.3g} m apart, closer than half an "
            f"element there ({0.5 * local:.3g} m); move them apart"
        )


def _vertex_edge_lengths(v, tri):
    """(nv,) longest edge touching each vertex (0 for vertices not in ``tri``)."""
    e = np.linalg.norm(v[np.roll(tri, -1, axis=1)] - v[tri], axis=2)
    out = np.zeros(len(v))
    for k in range(3):
        np.maximum.at(out, tri[:, k], np.maximum(e[:, k], e[:, k - 1]))
    return out


def _check_point(label, position, body, v, tri, margin):
    p = np.asarray(position, dtype=float)[None]
    if _inside(p, v, tri)[0]:
        raise GeometryError(f"{label} at {_fmt(p[0])} is inside body '{body}'; expected a point in the air")
    corners = v[tri]
    longest = float(edge_lengths(corners).max())
    d, which = nearest_on_surface(p, v, tri, reach=longest if margin is None else margin)
    if which[0] < 0:
        return
    if d[0] < NUMERICS.closest_source:
        raise GeometryError(
            f"{label} at {_fmt(p[0])} is {1e3 * d[0]:.3g} mm from the surface of body '{body}'; expected at "
            f"least {1e3 * NUMERICS.closest_source:g} mm (a monopole stands for a driver, whose radiating surface "
            "is larger than that): move it out, or make it a piston on the body's face"
        )
    c = corners[which[0]]
    need = margin if margin is not None else SOURCE_MARGIN * float(edge_lengths(c).max())
    if d[0] < need:
        why = "" if margin is not None else f" ({SOURCE_MARGIN:g} of the local element size)"
        raise GeometryError(
            f"{label} at {_fmt(p[0])} is {d[0]:.3g} m from the surface of body "
            f"'{body}', closer than the margin {need:.3g} m{why}; move it out"
            + ("" if margin is not None else ", or give the body finer elements there (a mesh file is used as drawn)")
        )

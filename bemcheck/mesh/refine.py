"""Finer elements round monopoles and observer points close to a body: where, and how fine.

The band's elements cannot follow the peak of a close monopole's field on
the surface: its self impedance and radiated power err by 0.2-3.7 % when it
stands 0.05-0.5 elements off (``NUMERICS.source_gap``, measured beside a
sphere).  Rather than refuse such a layout, a scripted body is meshed again
with elements of about the monopole's distance round its nearest surface
point (``NUMERICS.refined_gap``), graded back to the band's size
(``_sizing.SOURCE_GRADING``).  Only a monopole inside a body, or closer than
``NUMERICS.closest_source`` to it, is refused (by the clearance check of
``bemcheck.mesh.scene``); file bodies keep the mesh they were drawn with.

An observer point on or near a surface (an ear on a head) takes the surface
pressure, a P1 interpolation between vertices: it gets elements a fraction
of its distance to the nearest source, the scale on which that field varies.
"""

import numpy as np

from bemcheck.frames import unplace
from bemcheck.geometry_scripts._sizing import Refinement
from bemcheck.mesh.distance import nearest_on_surface, winding_number
from bemcheck.mesh.triangles import edge_lengths
from bemcheck.settings import NUMERICS

# relative change of a refinement's size below which a mesh is not made again
SAME_WITHIN = 0.1


def local_refinements(case, body, mesh, previous=()):
    """Refinements that ``body``'s mesh needs round the case's monopoles and observer points.

    Parameters
    ----------
    case : bemcheck.case.model.Case
    body : bemcheck.case.model.Body
        A scripted body of ``case``.
    mesh : bemcheck.mesh.bodies.BodyMesh
        Its mesh in its own frame: the band mesh, or one already refined
        by ``previous``.
    previous : tuple of Refinement
        The refinements ``mesh`` was made with.

    Returns
    -------
    tuple of Refinement
        One per monopole or observer point closer to the surface of
        ``mesh`` than ``NUMERICS.refine_below`` of the nearest element's
        longest edge, or refined before, in the body's frame.  The element
        size asked for is, for a monopole, its distance (no less than
        ``NUMERICS.closest_source``) over ``NUMERICS.refined_gap``; for an
        observer point, ``NUMERICS.observer_source_ratio`` times its
        distance to the nearest source, where that is finer than the mesh
        there.  A mesh's facets cut the surface, so the
        distance seen on a coarse mesh is off by up to its sagitta: it is
        measured again on the refined one, and a size within
        ``SAME_WITHIN`` of the one before is kept (the meshes have settled).
        Monopoles inside the body, deeper than ``NUMERICS.snap_inside`` of
        an element, are left to the clearance check, which names them.

    Examples
    --------
    >>> from bemcheck.case.load import parse_case
    >>> from bemcheck.mesh.bodies import BodyMesh
    >>> case = parse_case('''
    ... [case]
    ... title = "refine (doctest)"
    ... [frequencies]
    ... list = [100.0]
    ... [[body]]
    ... name = "ball"
    ... kind = "sphere"
    ... radius = 0.1
    ... [[source]]
    ... name = "p"
    ... role = "primary"
    ... at = [0.1, 0.1, 0.1]
    ... strength = 1e-3
    ... ''')
    >>> v = np.array([[0.0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1]]) * 0.3 - 0.05
    >>> t = np.array([[0, 2, 1], [0, 1, 3], [0, 3, 2], [1, 2, 3]])
    >>> mesh = BodyMesh(v, t, np.zeros(4, int), ("",))
    >>> [(round(r.reach, 4), round(r.size, 4)) for r in local_refinements(case, case.bodies[0], mesh)]
    [(0.0866, 0.0866)]
    """
    monopoles = [s.position for s in case.sources if s.radiator != "piston"]
    observers = [o.at for o in case.observers.points]
    if not (monopoles or observers) or not len(mesh.triangles):
        return ()
    points = unplace(monopoles + observers, body.at, body.axis)
    corners = mesh.vertices[mesh.triangles]
    longest = edge_lengths(corners).max(axis=1)
    distance, which = nearest_on_surface(points, mesh.vertices, mesh.triangles, NUMERICS.refine_below * longest.max())
    local = longest[np.maximum(which, 0)]
    before = {r.centre: r.size for r in previous}
    centres = [tuple(float(c) for c in p) for p in points]
    close = (which >= 0) & (distance < NUMERICS.refine_below * local)
    close |= np.array([c in before for c in centres])
    inside = np.zeros(len(points), dtype=bool)
    if close.any():
        inside[close] = winding_number(points[close], mesh.vertices, mesh.triangles) > 0.5
    # inside the facets by less than their sagitta may still be outside the solid: the finer mesh decides
    shallow = inside & (distance < NUMERICS.snap_inside * local)
    sources = unplace([s.position for s in case.sources], body.at, body.axis) if case.sources else np.zeros((0, 3))
    out = []
    for j in np.flatnonzero(close & (~inside | shallow)):
        d = float(distance[j]) if which[j] >= 0 else float(NUMERICS.refine_below * longest.max())
        if j < len(monopoles):
            size = max(d, NUMERICS.closest_source) / NUMERICS.refined_gap
        else:
            # the field varies on the scale of the distance to the nearest source
            reach = float(np.linalg.norm(sources - points[j], axis=1).min(initial=np.inf))
            size = NUMERICS.observer_source_ratio * max(reach, NUMERICS.closest_source)
            if size >= local[j] and centres[j] not in before:
                continue
        if abs(size - before.get(centres[j], np.inf)) <= SAME_WITHIN * size:
            size = before[centres[j]]
        out.append(Refinement(centres[j], d, size))
    return tuple(out)

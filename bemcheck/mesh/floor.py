"""Whether every meshed body clears the floor by what the half-space solve needs."""

import numpy as np

from bemcheck.errors import GeometryError
from bemcheck.mesh.triangles import edge_lengths

# A body and its mirror image in the floor must stand at least half an
# element apart, as two bodies must (mesh/scene.py), so a body's surface
# keeps a quarter of the local element size off the floor.  Common practice,
# no source: the image terms are integrated with the regular Gauss rules.
FLOOR_MARGIN = 0.25


def check_floor_clearance(case, mesh):
    """Refuse a body whose surface reaches the floor, or comes closer than ``FLOOR_MARGIN`` element sizes.

    Parameters
    ----------
    case : Case
        With ``case.floor`` (nothing is checked without one).
    mesh : SurfaceMesh
        The scene, a group per body name.

    Raises
    ------
    GeometryError
        Naming the file, the body, its lowest point's height and what was expected.

    Examples
    --------
    >>> from bemcheck.case.floor import Floor
    >>> from bemcheck.case.model import Body, Case, Source
    >>> from bemcheck.case.shapes import Sphere
    >>> from bemcheck.mesh.surface import SurfaceMesh
    >>> tet = SurfaceMesh(np.array([[0, 0, 0.1], [1, 0, 0.1], [0, 1, 0.1], [0, 0, 1.1]]),
    ...                   np.array([[0, 2, 1], [0, 1, 3], [0, 3, 2], [1, 2, 3]]), np.ones(4, int), {"b": 1})
    >>> case = Case("t", (100.0,), (Source("p", "primary", (2, 0, 1)),), bodies=(Body("b", Sphere(1.0)),),
    ...             floor=Floor(0.0))
    >>> check_floor_clearance(case, tet)
    Traceback (most recent call last):
    ...
    bemcheck.errors.GeometryError: <case>: body[0] 'b': its surface comes down to 0.1 m above the floor ...
    """
    floor = case.floor
    if floor is None:
        return
    file = case.path or "<case>"
    for i, body in enumerate(case.bodies):
        tri = mesh.triangles[np.isin(mesh.domains, mesh.tags_of_body(body.name))]
        corners = mesh.vertices[tri]
        heights = floor.height(corners)
        low = np.unravel_index(np.argmin(heights), heights.shape)
        h = float(heights[low])
        point = np.round(corners[low], 4).tolist()
        if h <= 0.0:
            raise GeometryError(
                f"{file}: body[{i}] '{body.name}': its surface reaches {-h:.3g} m below the floor "
                f"(floor.z = {floor.z:g} m) at {point}; expected every body above the floor"
            )
        edges = edge_lengths(corners).max(axis=1)
        touching = (np.abs(heights - h) <= 1e-12 * max(1.0, abs(floor.z))).any(axis=1)
        need = FLOOR_MARGIN * float(edges[touching].max())
        if h < need:
            raise GeometryError(
                f"{file}: body[{i}] '{body.name}': its surface comes down to {h:.3g} m above the floor "
                f"(floor.z = {floor.z:g} m) at {point}; expected at least {FLOOR_MARGIN:g} of the local "
                f"element size ({need:.3g} m) between a body and the floor: raise the body"
            )

"""The ``[floor]`` table: a rigid plane z = const below everything in the scene.

Read by :func:`read_floor` into a :class:`Floor`; :func:`check_floor` refuses
a case with anything at or below it.  Both models then answer for the half
space above the plane: the free-field model by image sources, the BEM by the
half-space Green's function (the floor itself is not meshed).  Whether each
body's surface clears the floor is known only from its mesh
(:func:`bemcheck.mesh.floor.check_floor_clearance`).
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.case.limits import COORDINATE
from bemcheck.errors import CaseError
from bemcheck.observers import for_observers


@dataclass(frozen=True)
class Floor:
    """A rigid plane z = ``z`` [m]; the air is the half space above it.

    Examples
    --------
    >>> Floor(-1.0).mirror([[0.0, 0.0, 0.5]]).tolist()
    [[0.0, 0.0, -2.5]]
    """

    z: float

    def mirror(self, points):
        """Mirror images of ``points`` (..., 3) in the plane [m]: (x, y, 2z₀ − z)."""
        out = np.array(points, dtype=float, copy=True)
        out[..., 2] = 2.0 * self.z - out[..., 2]
        return out

    def height(self, points):
        """Height of ``points`` (..., 3) above the plane [m] (negative below it)."""
        return np.asarray(points, dtype=float)[..., 2] - self.z


def read_floor(r):
    """The floor of a ``[floor]`` table reader, or None without the table.

    Parameters
    ----------
    r : TableReader or None
    """
    if r is None:
        return None
    floor = Floor(r.number("z", within=COORDINATE))
    r.done()
    return floor


def check_floor(case):
    """Refuse a case with a body, source, observer or far-field direction at or below the floor.

    Bodies are checked here by their reference point ``at``; their surfaces
    once meshed.  Far-field directions may graze the floor (elevation 0) but
    not point below it.

    Raises
    ------
    CaseError
        Naming the file, the key, the height found and what was expected.
    """
    floor = case.floor
    if floor is None:
        return
    file = case.path or "<case>"
    above = f"expected a point above the floor (floor.z = {floor.z:g} m)"
    for i, body in enumerate(case.bodies):
        _above(floor, body.at, f"{file}: body[{i}].at: body '{body.name}'", above)
    for i, src in enumerate(case.sources):
        key = "at" if src.on is None else "on"
        _above(floor, src.position, f"{file}: source[{i}].{key}: source '{src.name}'", above)
    for i, obs in enumerate(case.observers.points):
        _above(floor, obs.at, f"{file}: observers.points[{i}].at: observer point '{obs.name}'", above)
    for i, note in enumerate(case.played):
        if note.at is not None:
            _above(
                floor,
                note.at,
                f"{file}: note[{i}].distance: the point the levels of '{note.name}' were measured at",
                above,
            )
    _directions_above(case.observers.far_field, floor, file)


def _directions_above(far_field, floor, file):
    """Refuse far-field entries with directions below the floor, naming each and the fix."""
    held = []
    for f in far_field:
        unit = for_observers(f).unit
        below = np.flatnonzero(unit[:, 2] < -1e-12)
        if below.size:
            held.append((f, below.size, unit[below[0]]))
    if not held:
        return
    what = "; ".join(f"{_asked(f)} holds {n} direction(s) below it, e.g. {u.round(4).tolist()}" for f, n, u in held)
    fix = 'ask for plane = "xy" (the floor\'s own plane, grazing) and leave out ' + ", ".join(
        _asked(f) for f, _, _ in held
    )
    raise CaseError(
        f"{file}: observers.far_field: below the floor (floor.z = {floor.z:g} m): {what}; "
        f"expected directions above it only: {fix}"
    )


def _asked(f):
    if f.sphere:
        return f"the sphere (degree {f.degree})"
    if f.normal is None:
        return f'plane = "{f.plane}"'
    return f"plane '{f.plane}' (normal {list(f.normal)})"


def _above(floor, point, what, expected):
    h = float(floor.height(point))
    if h <= 0.0:
        where = "on" if h == 0.0 else f"{-h:.4g} m below"
        raise CaseError(f"{what} at {np.round(point, 4).tolist()} m is {where} the floor; {expected}")

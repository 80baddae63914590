"""Directions of observation, the planes they lie in, and angular sectors.

A plane of directions has a frame: azimuth φ is measured in it from its first
axis toward its second, elevation θ from the plane toward its normal (first ×
second).  The named planes: "xy" from +x toward +y, "xz" from +x toward +z,
"yz" from +y toward +z.  A plane given by its normal n takes as its first axis
the projection onto the plane of a reference axis, by default the coordinate
axis most nearly in the plane (+x, then +y, then +z on a tie), and n × first
as its second; the named planes are the planes of normals +z, −y and +x under
that rule.  Every direction carries the label of the plane (or "sphere") it
belongs to, so one set of directions can hold several planes.
"""

from dataclasses import dataclass
from functools import cache

import numpy as np
from scipy.integrate import lebedev_rule

_AXES = np.eye(3)
_NAMED = {"xy": (0, 1), "xz": (0, 2), "yz": (1, 2)}
PLANES = tuple(_NAMED)
# The label of the Lebedev directions in a set of directions.
SPHERE = "sphere"
# A reference axis closer than this to the normal (|cos|) leaves no clear azimuth zero.
ALONG_NORMAL = 1.0 - 1.0e-9

# Lebedev degree used for every radiated-power integral: exact for spherical
# harmonics to degree 41, ample for the far fields of bodies up to ka ≈ 15.
POWER_DEGREE = 41


@dataclass(frozen=True)
class Plane:
    """A plane of far-field directions and its frame: unit axes ``first`` (azimuth 0) and ``second`` (azimuth 90°).

    Examples
    --------
    >>> p = plane_frame(normal=(0.0, 0.0, 2.0))
    >>> p.first, p.second, p.normal
    ((1.0, 0.0, 0.0), (0.0, 1.0, 0.0), (0.0, 0.0, 1.0))
    """

    label: str
    first: tuple[float, float, float]
    second: tuple[float, float, float]

    @property
    def normal(self):
        """first × second: where elevation is positive."""
        return tuple(float(v) + 0.0 for v in np.cross(self.first, self.second))


def plane_frame(name="xy", normal=None, zero=None, label=None):
    """The frame of a named plane (``name``) or of the plane with ``normal``.

    Parameters
    ----------
    name : {"xy", "xz", "yz"}
        A named plane, used when ``normal`` is None.
    normal : (3,) array_like, optional
        Normal of the plane (any non-zero length).
    zero : (3,) array_like, optional
        Reference axis whose projection onto the plane is azimuth 0; default
        the coordinate axis most nearly in the plane (+x, +y, +z first on a tie).
    label : str, optional
        How the plane is called; default ``name``.

    Raises
    ------
    ValueError
        A normal that is zero or not finite, or ``zero`` along the normal.

    Examples
    --------
    >>> p = plane_frame(normal=(1.0, 1.0, 0.0), label="diagonal")
    >>> [round(v, 6) + 0.0 for v in p.first], [round(v, 6) + 0.0 for v in p.second]
    ([0.0, 0.0, 1.0], [0.707107, -0.707107, 0.0])
    >>> plane_frame("xz").normal
    (0.0, -1.0, 0.0)
    """
    if normal is None:
        a, b = _NAMED[name]
        return Plane(label or name, tuple(_AXES[a]), tuple(_AXES[b]))
    n = np.asarray(normal, dtype=float)
    length = np.linalg.norm(n)
    if not np.isfinite(length) or length == 0.0:
        raise ValueError(f"normal: expected a finite non-zero vector, got {list(normal)}")
    n = n / length
    if zero is None:
        ref = _AXES[int(np.argmin(np.round(np.abs(n), 12)))]
    else:
        ref = np.asarray(zero, dtype=float)
        if not np.all(np.isfinite(ref)) or np.linalg.norm(ref) == 0.0:
            raise ValueError(f"zero: expected a finite non-zero vector, got {list(zero)}")
        ref = ref / np.linalg.norm(ref)
        if abs(ref @ n) > ALONG_NORMAL:
            raise ValueError(f"zero: expected a direction not along the normal, got {list(zero)}")
    first = ref - (ref @ n) * n
    first /= np.linalg.norm(first)
    second = np.cross(n, first)
    return Plane(label or name, _clean(first), _clean(second))


def _clean(v):
    """A 3-tuple of floats with round-off below 1e-15 set to 0 (so +x reads (1, 0, 0))."""
    return tuple(float(x) + 0.0 for x in np.where(np.abs(v) < 1e-15, 0.0, v))


@dataclass(frozen=True, eq=False)
class Directions:
    """A set of far-field directions, each labelled with the plane (or sphere) it belongs to.

    Attributes
    ----------
    unit : (D, 3) ndarray
        Unit vectors.
    azimuth_deg, elevation_deg : (D,) ndarray
        Angles in the direction's own plane [deg]; azimuth in [0, 360).
    weights : (D,) ndarray
        Quadrature weights: angular spacing [rad] on a circle (sum 2π per
        plane), solid angle [sr] on a sphere (sum 4π).
    plane : (D,) ndarray of str
        Label of the plane each direction belongs to ("xy", a plane's name,
        or "sphere").
    """

    unit: np.ndarray
    azimuth_deg: np.ndarray
    elevation_deg: np.ndarray
    weights: np.ndarray
    plane: np.ndarray

    def __len__(self):
        return int(self.unit.shape[0])

    @property
    def planes(self):
        """The plane labels in order of first appearance."""
        return tuple(dict.fromkeys(str(p) for p in self.plane))


def _as_plane(plane):
    return plane if isinstance(plane, Plane) else plane_frame(plane)


def circle(plane="xy", step_deg=5.0):
    """Directions every ``step_deg`` round the full circle in ``plane`` (a name or a :class:`Plane`).

    Examples
    --------
    >>> d = circle("xz", 90.0)
    >>> (d.unit.round(12) + 0.0).tolist(), set(d.plane)
    ([[1.0, 0.0, 0.0], [0.0, 0.0, 1.0], [-1.0, 0.0, 0.0], [0.0, 0.0, -1.0]], {'xz'})
    """
    frame = _as_plane(plane)
    n = int(round(360.0 / step_deg))
    phi_deg = np.arange(n) * (360.0 / n)
    phi = np.radians(phi_deg)
    unit = np.cos(phi)[:, None] * np.array(frame.first) + np.sin(phi)[:, None] * np.array(frame.second)
    return Directions(unit, phi_deg, np.zeros(n), np.full(n, 2.0 * np.pi / n), np.full(n, frame.label, dtype=object))


def sphere(degree=POWER_DEGREE, plane="xy"):
    """Lebedev directions of ``degree`` (scipy.integrate.lebedev_rule), angles in the frame of ``plane``.

    Examples
    --------
    >>> d = sphere(17)
    >>> len(d), round(float(d.weights.sum()), 12), d.planes
    (110, 12.566370614359, ('sphere',))
    """
    x, w = lebedev_rule(degree)
    unit = x.T.copy()
    frame = _as_plane(plane)
    a, b, n = (np.array(v) for v in (frame.first, frame.second, frame.normal))
    az = np.degrees(np.arctan2(unit @ b, unit @ a)) % 360.0
    el = np.degrees(np.arcsin(np.clip(unit @ n, -1.0, 1.0)))
    return Directions(unit, az, el, w, np.full(len(w), SPHERE, dtype=object))


def join(*sets):
    """One set of directions holding ``sets`` one after the other.

    Examples
    --------
    >>> d = join(circle("xy", 90.0), circle("yz", 90.0))
    >>> len(d), d.planes
    (8, ('xy', 'yz'))
    """
    fields = ("unit", "azimuth_deg", "elevation_deg", "weights", "plane")
    return Directions(*(np.concatenate([getattr(s, f) for s in sets]) for f in fields))


@cache
def lebedev_degrees():
    """The Lebedev degrees scipy provides (scipy.integrate.lebedev_rule), ascending.

    Examples
    --------
    >>> lebedev_degrees()[:4], 4 in lebedev_degrees(), lebedev_degrees()[-1]
    ((3, 5, 7, 9), False, 131)
    """
    available = []
    for degree in range(1, 132):
        try:
            lebedev_rule(degree)
        except (ValueError, NotImplementedError):  # scipy answers an unknown degree with either
            continue
        available.append(degree)
    return tuple(available)


def for_observers(far_field):
    """The directions a case's ``[observers] far_field`` asks for, every entry's in the order given.

    Parameters
    ----------
    far_field : FarField or sequence of FarField
        Each a circle (``plane`` a named plane or the name of a plane with
        ``normal`` and ``zero``, every ``step_deg``) or a Lebedev sphere
        (``sphere``, ``degree``, angles in the frame of the named ``plane``).
    """
    entries = far_field if isinstance(far_field, tuple | list) else (far_field,)
    return join(*(_entry(e) for e in entries))


def _entry(e):
    if e.sphere:
        return sphere(e.degree, e.plane)
    normal = getattr(e, "normal", None)
    frame = plane_frame(e.plane, normal, getattr(e, "zero", None), label=e.plane)
    return circle(frame, e.step_deg)


def plane_labels(planes):
    """The distinct labels of ``planes`` (a (D,) sequence of str) in order of first appearance.

    Examples
    --------
    >>> plane_labels(["xz", "xz", "xy"])
    ('xz', 'xy')
    """
    return tuple(dict.fromkeys(str(p) for p in planes))


def sector_mask(planes, azimuth_deg, sector):
    """Mask of the directions inside ``sector``: in its plane and within its azimuths.

    Parameters
    ----------
    planes : (D,) array_like of str or None
        Each direction's plane label; None: every direction is in the sector's plane
        (results written before directions carried their plane).
    azimuth_deg : (D,) array_like
        Each direction's azimuth in its own plane [deg].
    sector : Sector
        With ``from_deg``, ``to_deg`` and ``plane`` (None: the first plane of ``planes``).

    Examples
    --------
    >>> from types import SimpleNamespace as S
    >>> sector_mask(["xy", "xy", "xz"], [0.0, 90.0, 0.0], S(from_deg=-10, to_deg=10, plane="xz")).tolist()
    [False, False, True]
    """
    inside = in_sector(azimuth_deg, sector.from_deg, sector.to_deg)
    if planes is None:
        return inside
    labels = np.asarray([str(p) for p in planes], dtype=object)
    plane = sector.plane if sector.plane is not None else (labels[0] if labels.size else None)
    return inside & (labels == plane)


def planes_of(ds):
    """Each direction's plane label in a results Dataset (None when the file predates the labels)."""
    return ds["plane"].values if "plane" in ds.coords else None


def in_sector(azimuth_deg, from_deg, to_deg):
    """Mask of azimuths inside the sector from ``from_deg`` to ``to_deg``, counter-clockwise.

    A sector of 360° or more holds every direction; from 300 to 60 wraps
    through 0.

    Examples
    --------
    >>> in_sector(np.array([0.0, 90.0, 180.0, 330.0]), 300, 60).tolist()
    [True, False, False, True]
    """
    az = np.asarray(azimuth_deg, dtype=float) % 360.0
    span = to_deg - from_deg
    if span >= 360.0:
        return np.ones(az.shape, dtype=bool)
    start = from_deg % 360.0
    return ((az - start) % 360.0) <= span % 360.0 + 1e-9

"""Directions of observation and angular sectors.

Azimuth φ is measured in the case's plane from its first axis toward its
second ("xy": from +x toward +y; "xz": from +x toward +z; "yz": from +y
toward +z); elevation θ from that plane toward the third axis (first × second).
"""

from dataclasses import dataclass
from functools import cache

import numpy as np
from scipy.integrate import lebedev_rule

_PLANES = {
    "xy": (np.array([1.0, 0, 0]), np.array([0, 1.0, 0])),
    "xz": (np.array([1.0, 0, 0]), np.array([0, 0, 1.0])),
    "yz": (np.array([0, 1.0, 0]), np.array([0, 0, 1.0])),
}
PLANES = tuple(_PLANES)

# Lebedev degree used for every radiated-power integral: exact for spherical
# harmonics to degree 41, ample for the far fields of bodies up to ka ≈ 15.
POWER_DEGREE = 41


@dataclass(frozen=True, eq=False)
class Directions:
    """A set of far-field directions.

    Attributes
    ----------
    unit : (D, 3) ndarray
        Unit vectors.
    azimuth_deg, elevation_deg : (D,) ndarray
        Angles in the case's plane [deg]; azimuth in [0, 360).
    weights : (D,) ndarray
        Quadrature weights: angular spacing [rad] on a circle, solid angle
        [sr] on a sphere (sum 4π).
    """

    unit: np.ndarray
    azimuth_deg: np.ndarray
    elevation_deg: np.ndarray
    weights: np.ndarray

    def __len__(self):
        return int(self.unit.shape[0])


def _frame(plane):
    a, b = _PLANES[plane]
    return a, b, np.cross(a, b)


def circle(plane="xy", step_deg=5.0):
    """Directions every ``step_deg`` round the full circle in ``plane``.

    Examples
    --------
    >>> d = circle("xz", 90.0)
    >>> (d.unit.round(12) + 0.0).tolist()
    [[1.0, 0.0, 0.0], [0.0, 0.0, 1.0], [-1.0, 0.0, 0.0], [0.0, 0.0, -1.0]]
    """
    n = int(round(360.0 / step_deg))
    phi_deg = np.arange(n) * (360.0 / n)
    phi = np.radians(phi_deg)
    a, b, _ = _frame(plane)
    unit = np.cos(phi)[:, None] * a + np.sin(phi)[:, None] * b
    return Directions(unit, phi_deg, np.zeros(n), np.full(n, 2.0 * np.pi / n))


def sphere(degree=POWER_DEGREE, plane="xy"):
    """Lebedev directions of ``degree`` (scipy.integrate.lebedev_rule).

    Examples
    --------
    >>> d = sphere(17)
    >>> len(d), round(float(d.weights.sum()), 12)
    (110, 12.566370614359)
    """
    x, w = lebedev_rule(degree)
    unit = x.T.copy()
    a, b, n = _frame(plane)
    az = np.degrees(np.arctan2(unit @ b, unit @ a)) % 360.0
    el = np.degrees(np.arcsin(np.clip(unit @ n, -1.0, 1.0)))
    return Directions(unit, az, el, w)


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
    """The directions a case's ``[observers] far_field`` asks for."""
    if far_field.sphere:
        return sphere(far_field.degree, far_field.plane)
    return circle(far_field.plane, far_field.step_deg)


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

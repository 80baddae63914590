"""Played notes: a spectrum's levels and where they were measured, from the primary it is measured from."""

import math
from dataclasses import replace

import numpy as np

from bemcheck.case.limits import FREQUENCY
from bemcheck.case.model import Spectrum


def read_spectrum(r, name):
    fundamental = r.number("fundamental", positive=True, within=FREQUENCY)
    levels = r.numbers("spl_at_1m", min_length=1)
    for i, level in enumerate(levels):
        if not -20.0 <= level <= 200.0:
            r.fail(f"spl_at_1m[{i}]", "an SPL in dB re 20 µPa between -20 and 200", level)
    direction = r.raw("direction", None)
    if direction is not None:
        direction = _direction(r, direction)
    distance = r.number("distance", 1.0, positive=True)
    r.done()
    return Spectrum(fundamental, levels, name, direction=direction, distance=distance)


def _direction(r, value):
    """Unit vector [x, y, z] from ``[azimuth_deg, elevation_deg]`` in the scene frame:
    azimuth from +x toward +y, elevation toward +z."""
    expected = "an angle pair [azimuth_deg, elevation_deg] (azimuth from +x toward +y, elevation toward +z)"
    if not isinstance(value, list) or len(value) != 2:
        r.fail("direction", expected, value)
    az = r.check_number("direction[0]", value[0], low=-360.0, high=360.0)
    el = r.check_number("direction[1]", value[1], low=-90.0, high=90.0)
    a, e = math.radians(az), math.radians(el)
    return (math.cos(e) * math.cos(a), math.cos(e) * math.sin(a), math.sin(e))


def read_note(r):
    return read_spectrum(r, r.string("name"))


def measured_at(spectrum, source, bodies):
    """The spectrum with its measurement point resolved from ``source``, the primary it is
    measured from: along ``direction``, by default the axis of the body the primary is on
    (+x for a primary on no body)."""
    d = spectrum.direction
    if d is None:
        d = (
            tuple(float(v) for v in np.asarray(bodies[source.on].axis) / np.linalg.norm(bodies[source.on].axis))
            if source.on is not None
            else (1.0, 0.0, 0.0)
        )
    at = tuple(float(v) for v in np.asarray(source.position) + spectrum.distance * np.asarray(d))
    return replace(spectrum, direction=d, at=at)

"""Source strengths for a case: the primaries as given, the controls by the case's objective."""

import numpy as np

from bemcheck.case.objectives import DelayedFeed, MinimumPower, SectorPressure
from bemcheck.observers import sector_mask
from bemcheck.solvers.control import optimal as control
from bemcheck.solvers.freefield import volume_velocity_from_spl


def primary_strengths(case):
    """Volume-velocity amplitudes of the primary sources used in a sweep [m^3/s].

    A primary given only by a played note takes the volume velocity of the
    note's first harmonic (free-field relation at 1 m) at every frequency of
    the sweep; the harmonics themselves are checked before build.

    Returns
    -------
    (Np,) ndarray of complex
    """
    q = []
    for s in case.primaries:
        if s.strength is not None:
            q.append(s.strength)
        else:
            q.append(float(volume_velocity_from_spl(s.spectrum.fundamental, case.medium, s.spectrum.spl_at_1m[0])))
    return np.asarray(q, dtype=complex)


def source_indices(case):
    """Indices of (primary, control) sources in ``case.sources`` order."""
    roles = [s.role for s in case.sources]
    return [i for i, r in enumerate(roles) if r == "primary"], [i for i, r in enumerate(roles) if r == "control"]


def _minimum_power(objective, case, response, directions, q_p, primary, controls):
    return control.optimal_power_control(response.power_matrix, primary, controls, q_p)


def _sector_pressure(objective, case, response, directions, q_p, primary, controls):
    sector = objective.sector
    mask = sector_mask(directions.plane, directions.azimuth_deg, sector)
    f = response.far_field[mask]
    return control.optimal_pressure_control(
        f[:, primary], f[:, controls], q_p, effort=objective.effort, weights=directions.weights[mask]
    )


def _delayed_feed(objective, case, response, directions, q_p, primary, controls):
    k = 2.0 * np.pi * response.frequency / case.medium.speed_of_sound
    return control.delay_control(q_p, len(controls), k, objective.delay_distance)


# The strengths each objective of :data:`bemcheck.case.objectives.OBJECTIVES` asks for, by its class.
STRENGTHS = {MinimumPower: _minimum_power, SectorPressure: _sector_pressure, DelayedFeed: _delayed_feed}


def control_strengths(case, response, directions, q_primary=None):
    """Control strengths that the case's objective asks for, in the model of ``response``.

    Parameters
    ----------
    case : Case
    response : FieldResponse
        Free-field or BEM response at one frequency.
    directions : Directions
        The far-field directions of ``response.far_field`` (for a sector
        objective, the directions inside the sector are the target).
    q_primary : (Np,) array_like of complex, optional
        Primary strengths [m^3/s]; default :func:`primary_strengths`.

    Returns
    -------
    (Nc,) ndarray of complex
        [m^3/s].
    """
    primary, controls = source_indices(case)
    q_p = primary_strengths(case) if q_primary is None else np.asarray(q_primary, dtype=complex)
    if not controls:
        return np.zeros(0, dtype=complex)
    solve = STRENGTHS[type(case.control)]
    return solve(case.control, case, response, directions, q_p, primary, controls)


def full_strengths(case, q_control):
    """All source strengths in case order, primaries as given and controls as ``q_control``."""
    primary, controls = source_indices(case)
    q = np.zeros(len(case.sources), dtype=complex)
    q[primary] = primary_strengths(case)
    q[controls] = q_control
    return q

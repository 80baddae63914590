"""Each trust limit says whether the level or the phase set it, checked against the exact sphere series.

A monopole 0.15 m from the centre of a rigid sphere of radius 0.1 m, no
control: its field is judged against the free monopole's, level and phase.
The 'BEM' is the exact series (Duda & Martens 1998, JASA 104(5) 3048-3058;
Bowman, Senior & Uslenghi 1987, sec. 10.3; tests/support/sphere_world.py), so
there is no numerical error and the first departure is plain arithmetic on
the series against the free monopole (−iωρ/4π) e^{−ik d·x0}.  With the phase
tolerance at its largest (180°, which no phase difference exceeds) only the
level can set the limit; with a level tolerance no departure here reaches
(40 dB) only the phase can.
"""

import numpy as np
import pytest

from bemcheck.case import parse_case
from bemcheck.observers import for_observers
from bemcheck.results.combine import combine
from bemcheck.run.runner import free_responses
from tests.support.cases import CIRCLE_5, SIXTH_OCTAVES_100_1600, case_text, source
from tests.support.sphere_world import sphere_response

ONE = case_text(
    "a monopole beside a rigid sphere, judged field against field (invented test case)",
    SIXTH_OCTAVES_100_1600,
    sources=source("p", "primary", [0.0, 0.0, 0.0], 1e-3),
    observers=CIRCLE_5 + "[tolerance]\nlevel_db = {level}\nphase_deg = {phase}\n",
)
CENTRE, RADIUS = (0.15, 0.0, 0.0), 0.1


def _series_departures(case, directions):
    """(F, D) level [dB] and phase [deg] of the series' far field against the free monopole's."""
    x0 = np.array(case.sources[0].position)
    level, phase = [], []
    for f in case.frequencies:
        k = 2 * np.pi * f / case.medium.speed_of_sound
        free = -1j * 2 * np.pi * f * case.medium.density / (4 * np.pi) * np.exp(-1j * k * directions.unit @ x0)
        exact = sphere_response(f, case.medium, CENTRE, RADIUS, [x0], directions.unit).far_field[:, 0]
        level.append(20 * np.log10(np.abs(exact) / np.abs(free)))
        phase.append(np.degrees(np.angle(exact / free)))
    return np.array(level), np.array(phase)


@pytest.mark.parametrize(("level", "phase", "by"), [(1.0, 180.0, "level"), (40.0, 15.0, "phase")])
def test_the_trust_limit_names_what_set_it(level, phase, by):
    case = parse_case(ONE.replace("{level}", str(level)).replace("{phase}", str(phase)))
    d = for_observers(case.observers.far_field)
    exact = [
        sphere_response(f, case.medium, CENTRE, RADIUS, [s.position for s in case.sources], d.unit)
        for f in case.frequencies
    ]
    ds, v = combine(case, d, free_responses(case, d), exact)
    dl, dp = _series_departures(case, d)
    # directions in a deep null of both models are left out (common practice, no source)
    beyond = ((np.abs(dl) > level) | (np.abs(dp) > phase)) & ds["significant"].sel(signal="p").values
    first = int(np.flatnonzero(beyond.any(axis=1))[0])
    assert 0 < first < len(case.frequencies) - 1  # the crossing lies inside the band
    limit = float(ds["trust_limit_hz"].sel(signal="p").values[0])
    f = np.asarray(case.frequencies)
    assert f[first - 1] <= limit <= f[first]
    assert bool(ds["trust_limit_found"].sel(signal="p").values[0])
    assert str(ds["trust_limit_set_by"].sel(signal="p").values[0]) == by
    assert v.sectors[0].trusted_fields()[0][2] == by

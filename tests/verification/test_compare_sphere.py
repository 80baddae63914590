"""The comparison on a real BEM run: a monopole beside a rigid sphere, against the exact series."""

import numpy as np
import pytest

from bemcheck.case import parse_case
from bemcheck.compare import crossing_frequency
from bemcheck.mesh import mesh_scene, plan_bands
from bemcheck.observers import for_observers
from bemcheck.results.combine import combine
from bemcheck.run.runner import free_responses
from bemcheck.run.tasks import solve_case_frequency
from bemcheck.solvers.response import FieldResponse
from tests.support.sphere_series import far_field_ratio

A = 0.1  # sphere radius [m]
CASE = f"""
[case]
title = "monopole beside a rigid sphere"
[frequencies]
start = 200.0
stop = 600.0
per_octave = 2
[mesh]
elements_per_wavelength = 6
band_octaves = 6
[[body]]
name = "sphere"
kind = "sphere"
radius = {A}
[[source]]
name = "p"
role = "primary"
at = [0.0, 0.0, {2 * A}]
strength = 1e-3
[observers]
far_field = {{ plane = "xz", step_deg = 10.0 }}
[tolerance]
level_db = 1.0
phase_deg = 180.0
"""


@pytest.fixture(scope="module")
def sphere_run(tmp_path_factory):
    """BEM responses on one mesh (the band's), compared with bemcheck's comparator.

    The sweep's self-check solve on a 1.5x finer mesh is left out here to keep
    the test within its time; the error estimate is set to zero.
    """
    case = parse_case(CASE)
    cache = tmp_path_factory.mktemp("sphere")
    directions = for_observers(case.observers.far_field)
    mesh = mesh_scene(case, plan_bands(case)[0].element_size, cache_dir=cache)
    bem = []
    for f in case.frequencies:
        arrays, _ = solve_case_frequency(case, mesh, f, directions)
        bem.append(FieldResponse(f, arrays["far_field"], arrays["points"], arrays["impedance"], arrays["power_matrix"]))
    ds, _ = combine(case, directions, free_responses(case, directions), bem)
    return case, ds


def exact_departure_db(case, ds):
    """ΔL from the series of a point source beside a rigid sphere (Duda & Martens 1998,
    JASA 104(5) 3048–3058, eq. (5) and its far-field limit; Bowman, Senior & Uslenghi 1987,
    sec. 10.3)."""
    c = case.medium.speed_of_sound
    theta = np.radians(90.0 - ds["azimuth_deg"].values)  # plane xz: azimuth from +x toward +z
    out = []
    for f in ds["frequency"].values:
        ka = 2 * np.pi * f / c * A
        out.append(20 * np.log10(np.abs(far_field_ratio(ka, 2.0, theta))))
    return np.array(out)


def test_level_departure_matches_the_series(sphere_run):
    case, ds = sphere_run
    exact = exact_departure_db(case, ds)
    got = ds["level_departure_db"].sel(signal="p").values
    # P1 Burton–Miller at ≥ 6 elements per wavelength: ≤ 0.3 dB (the target)
    assert np.max(np.abs(got - exact)) < 0.3


def test_trust_limit_matches_the_series_within_one_step(sphere_run):
    case, ds = sphere_run
    exact = exact_departure_db(case, ds)
    f = ds["frequency"].values
    f_exact, found_exact = crossing_frequency(f, np.abs(exact).max(axis=1) / case.tolerance.level_db)
    f_bem = float(ds["trust_limit_hz"].sel(sector="all", signal="p"))
    assert found_exact and bool(ds["trust_limit_found"].sel(sector="all", signal="p"))
    step = f[1] / f[0]
    assert f_exact / step <= f_bem <= f_exact * step

"""The BEM solve against the exact series of a rigid sphere (radius a = 1 m, c = 343 m/s).

Series: tests/support/sphere_series.py.  Meshes: geodesic spheres with every vertex
on the sphere (flat triangles, so the body is slightly smaller than the sphere; that
geometric error is part of what is measured).  "Elements per wavelength" is the
wavelength over the longest edge of the mesh.

Accuracy targets of the issue: 0.1 dB and 1° at 8 elements per wavelength, 0.3 dB at 6.
"""

from functools import cache

import numpy as np
import pytest

from bemcheck.case.model import Medium
from bemcheck.solvers import freefield
from bemcheck.solvers.bem.solve import solve_frequency
from tests.support import sphere_series as series
from tests.support.icosphere import icosphere, pole_up, ray_hit

MEDIUM = Medium(343.0, 1.2)
A = 1.0
THETA = np.radians(np.arange(0.0, 181.0, 10.0))
DIRECTIONS = np.stack([np.sin(THETA), 0 * THETA, np.cos(THETA)], axis=1)


def db(x):
    return 20 * np.log10(np.abs(x))


def deg(x):
    return np.degrees(np.angle(x))


def freq(ka):
    return ka * MEDIUM.speed_of_sound / (2 * np.pi * A)


@cache
def sphere(n):
    """Geodesic sphere of 20 n² triangles with a vertex on +z."""
    return pole_up(icosphere(A, n))


def pattern_error(sol, ka, column=0, r0=2.0):
    """BEM far field of a monopole on +z at r0 a over the exact one, per direction."""
    k = ka / A
    free = freefield.far_field_matrix(freq(ka), MEDIUM, [[0, 0, r0 * A]], DIRECTIONS)[:, 0]
    exact = series.far_field_ratio(ka, r0, THETA) * np.exp(1j * k * r0 * A * np.cos(THETA))
    return sol.far_field[:, column] / free / exact


def just_off(n):
    """On +z, 0.3 element sizes off the surface (the solver refuses closer than 0.25) [m]."""
    return A + 0.3 * sphere(n).edge_lengths().max()


@cache
def solve_beside(n, ka):
    """Monopoles at 2a on +z, at (1.3, 0.9, -0.4) a and just off the pole;
    surface points at 0°, 90°, 180° from +z."""
    mesh = sphere(n)
    angles = np.radians([0.0, 90.0, 180.0])
    on_mesh = np.array([ray_hit(mesh, [np.sin(t), 0.0, np.cos(t)]) for t in angles])
    sources = [[0, 0, 2 * A], [1.3 * A, 0.9 * A, -0.4 * A], [0, 0, just_off(n)]]
    return solve_frequency(mesh, freq(ka), MEDIUM, sources, DIRECTIONS, points=on_mesh)


def test_reference_values_of_the_series():
    """The support series reproduce the published or stated values they stand for:
    Bowman, Senior & Uslenghi (1987) sec. 10.3 backscatter form function 0.938122 (ka = 1),
    0.761746 (ka = 2) (values from the issue, computed from that series);
    Duda & Martens (1998) |p/p_free| = 2.996370, 0.761474, 0.553136 at 0°, 90°, 180°,
    ka = 1, r0 = 2a; Beranek & Mellow (2019) sec. 12.5: a point source on the sphere gives
    +3.04 dB on axis at ka = 1, tending to +6.02 dB; monopole power beside the sphere
    W/W_free = 1.145730 at ka = 1, r0 = 2a (issue value)."""
    assert series.backscatter_form_function(1.0) == pytest.approx(0.938122, abs=1e-6)
    assert series.backscatter_form_function(2.0) == pytest.approx(0.761746, abs=1e-6)
    ratio = np.abs(series.surface_green(1.0, 2.0, np.radians([0, 90, 180])) / (np.exp(2j) / (4 * np.pi * 2)))
    np.testing.assert_allclose(ratio, [2.996370, 0.761474, 0.553136], atol=2e-6)
    assert db(series.far_field_ratio(1.0, 1.0, 0.0)[0]) == pytest.approx(3.04, abs=0.005)
    assert db(series.far_field_ratio(60.0, 1.0, 0.0)[0]) == pytest.approx(20 * np.log10(2), abs=0.01)
    assert series.power_ratio(1.0, 2.0) == pytest.approx(1.145730, abs=1e-6)


@pytest.mark.parametrize("ka, n", [(1.0, 6), (2.0, 9)])
def test_backscatter_form_function(ka, n):
    """Rigid sphere in a plane wave (Bowman, Senior & Uslenghi 1987, sec. 10.3): the
    backscattered amplitude within 0.1 dB and 1°.  The plane wave is a monopole 10^4 a away
    on -z (its curvature changes the answer by 1e-4 of it, from the point-source series)."""
    r0 = 1e4 * A
    src = [[0, 0, -r0]]
    back = [[0, 0, -1.0]]
    sol = solve_frequency(sphere(n), freq(ka), MEDIUM, src, back, power=False)
    assert sol.elements_per_wavelength > 8
    scattered = sol.far_field[0, 0] - freefield.far_field_matrix(freq(ka), MEDIUM, src, back)[0, 0]
    incident_at_centre = freefield.transfer_matrix(freq(ka), MEDIUM, src, [[0, 0, 0]])[0, 0]
    f = scattered / incident_at_centre
    exact = series.plane_wave_amplitude(ka, np.pi, A)[0]
    assert abs(2 * abs(f) / A - series.backscatter_form_function(ka)) < 0.012 * series.backscatter_form_function(ka)
    assert abs(db(f / exact)) < 0.1
    assert abs(deg(f / exact)) < 1.0


def test_surface_pressure_of_a_point_source():
    """Duda & Martens (1998), JASA 104(5) 3048-3058: point source at r0 = 2a, receiver on
    the surface, ka = 1: |p / p_free at centre| at 0°, 90°, 180° within 0.1 dB and 1°."""
    sol = solve_beside(6, 1.0)
    angles = np.radians([0.0, 90.0, 180.0])
    exact = series.surface_green(1.0, 2.0, angles)
    p_free_centre = freefield.transfer_matrix(freq(1.0), MEDIUM, [[0, 0, 2 * A]], [[0, 0, 0]])[0, 0]
    g_free_centre = np.exp(2j) / (4 * np.pi * 2 * A)
    ratio = (sol.points[:, 0] / p_free_centre) / (exact / g_free_centre)
    assert np.abs(db(ratio)).max() < 0.1
    assert np.abs(deg(ratio)).max() < 1.0


def test_far_field_of_a_point_source_beside_the_sphere():
    """Whole pattern (0-180° in 10° steps) of the monopole at 2a, ka = 1, against the
    series (sphere_series.far_field_ratio): within 0.1 dB and 1°."""
    e = pattern_error(solve_beside(6, 1.0), 1.0)
    assert np.abs(db(e)).max() < 0.1
    assert np.abs(deg(e)).max() < 1.0


@pytest.mark.parametrize("ka, n", [(1.0, 6), (4.0, 8)])
def test_point_source_just_off_the_sphere(ka, n):
    """Beranek & Mellow (2019), Acoustics: Sound Fields, Transducers and Vibration, sec.
    12.5: a point source on a rigid sphere, on-axis level over the free monopole's (+3.04 dB
    at ka = 1, rising toward +6.02 dB).  Here the source is 0.3 element sizes off the
    surface; the series is evaluated at the same r0.  Within 0.1 dB and 1°."""
    r0 = just_off(n)
    sol = solve_beside(n, ka)
    free = freefield.far_field_matrix(freq(ka), MEDIUM, [[0, 0, r0]], DIRECTIONS[:1])[0, 0]
    exact = series.far_field_ratio(ka, r0 / A, 0.0)[0] * np.exp(1j * ka * r0 / A)
    gain = sol.far_field[0, 2] / free
    assert abs(db(gain / exact)) < 0.1
    assert abs(deg(gain / exact)) < 1.0
    assert db(gain) > (2.5 if ka == 1.0 else 5.0)
    assert 0.3 <= sol.source_gaps[2] < 0.4  # local edges are a little shorter than the longest


def test_power_of_a_monopole_beside_the_sphere():
    """W/W_free = 1 + (4π/k) Im G_s(x0, x0) = 1.145730 at ka = 1, r0 = 2a (series); both
    routes, ½ Re Z and the far-field integral, within 0.3 % (0.013 dB)."""
    sol = solve_beside(6, 1.0)
    w_free = freefield.radiation_resistance(freq(1.0), MEDIUM) / 2
    exact = series.power_ratio(1.0, 2.0)
    assert 0.5 * sol.impedance[0, 0].real / w_free == pytest.approx(exact, rel=3e-3)
    assert sol.power_matrix[0, 0].real / w_free == pytest.approx(exact, rel=3e-3)


def test_reciprocity_and_the_two_power_routes():
    """Reciprocity (Z symmetric; Pierce, Acoustics, 1989, sec. 4-7, from memory) to 1e-3
    relative, and P = ½ Re Z entry by entry (both are the radiated power form) to 1e-3
    for the sources at least an element size off the surface; 0.5 % for the one at
    0.3 element sizes, whose self term the P1 surface field resolves less well."""
    sol = solve_beside(6, 1.0)
    z = sol.impedance
    assert np.abs(z - z.T).max() < 1e-3 * np.abs(z).max()
    p = sol.power_matrix
    gap = np.abs(p - (z + z.conj().T) / 4) / np.abs(p).max()
    assert gap[:2, :2].max() < 1e-3
    assert gap.max() < 5e-3
    np.testing.assert_allclose(p, p.conj().T, atol=1e-12 * np.abs(p).max())


@pytest.mark.parametrize(
    "ka, neighbours",
    [(np.pi, (2.9, 3.4)), (4.4934, (4.3, 4.7))],
)
def test_irregular_frequencies_do_not_spoil_the_answer(ka, neighbours):
    """The plain equation is singular at the interior Dirichlet eigenvalues of the sphere,
    j_n(ka) = 0: ka = π (n = 0) and 4.4934 (n = 1) (Abramowitz & Stegun 1964, table 10.6,
    from memory).  With Burton-Miller the pattern error there stays within 1.5 times the
    worse neighbour's, and within the targets for the mesh's elements per wavelength
    (720 triangles: 9 per wavelength at ka = π, 6.4 at 4.49)."""
    worst = {}
    for x in (ka, *neighbours):
        sol = solve_frequency(sphere(6), freq(x), MEDIUM, [[0, 0, 2 * A]], DIRECTIONS, power=False)
        e = pattern_error(sol, x)
        worst[x] = (np.abs(db(e)).max(), np.abs(deg(e)).max(), sol.elements_per_wavelength)
    for i in (0, 1):
        assert worst[ka][i] <= 1.5 * max(worst[n][i] for n in neighbours)
    tol_db, tol_deg = (0.1, 1.0) if worst[ka][2] >= 8 else (0.3, 3.0)
    assert worst[ka][0] < tol_db and worst[ka][1] < tol_deg


@pytest.mark.parametrize("epw, n, tol_db, tol_deg", [(8.0, 6, 0.1, 1.0), (6.0, 5, 0.3, 3.0)])
def test_accuracy_target_at_elements_per_wavelength(epw, n, tol_db, tol_deg):
    """At exactly 8 (6) elements per wavelength by the longest edge, the far-field pattern
    of the monopole at 2a is within 0.1 dB and 1° (0.3 dB) of the series (the issue's
    targets; the phase bound at 6 is common practice, no source)."""
    mesh = sphere(n)
    ka = 2 * np.pi * A / (epw * mesh.edge_lengths().max())
    sol = solve_frequency(mesh, freq(ka), MEDIUM, [[0, 0, 2 * A]], DIRECTIONS, power=False)
    assert sol.elements_per_wavelength == pytest.approx(epw)
    e = pattern_error(sol, ka)
    assert np.abs(db(e)).max() < tol_db
    assert np.abs(deg(e)).max() < tol_deg


def _convergence_slope(ns, ka=2.0):
    h, err = [], []
    for n in ns:
        sol = solve_frequency(sphere(n), freq(ka), MEDIUM, [[0, 0, 2 * A]], DIRECTIONS, power=False)
        free = freefield.far_field_matrix(freq(ka), MEDIUM, [[0, 0, 2 * A]], DIRECTIONS)[:, 0]
        exact = free * series.far_field_ratio(ka, 2.0, THETA) * np.exp(1j * ka * 2.0 * np.cos(THETA))
        h.append(sol.element_size)
        err.append(np.abs(sol.far_field[:, 0] - exact).max() / np.abs(exact).max())
    return np.polyfit(np.log(h), np.log(err), 1)[0], err


def test_error_falls_as_h_squared():
    """P1 on flat triangles: far-field error O(h²) (Sauter & Schwab, Boundary Element
    Methods, 2011, sec. 4.2.5 for the Galerkin error, plus the O(h²) geometric error of
    flat triangles): fitted slope of log(error) against log(h) between 1.7 and 2.5."""
    slope, err = _convergence_slope((2, 3, 4, 5))
    assert 1.7 < slope < 2.5, (slope, err)
    assert err[-1] < err[0] / 4


def test_error_falls_as_h_squared_fine_meshes():
    """As above on meshes of 320 to 5,120 triangles."""
    slope, err = _convergence_slope((4, 8, 12, 16))
    assert 1.7 < slope < 2.5, (slope, err)


@pytest.mark.parametrize("ka", [6.0, 9.0])
def test_higher_ka_at_eight_elements_per_wavelength(ka):
    """Pattern of the monopole at 2a at ka = 6 and 9 on a mesh of at least 8 elements per
    wavelength: within 0.1 dB and 1° of the series."""
    n = int(np.ceil(8 * ka * 1.3 / (2 * np.pi))) + 1
    sol = solve_frequency(sphere(n), freq(ka), MEDIUM, [[0, 0, 2 * A]], DIRECTIONS, power=False)
    assert sol.elements_per_wavelength >= 8
    e = pattern_error(sol, ka)
    assert np.abs(db(e)).max() < 0.1
    assert np.abs(deg(e)).max() < 1.0

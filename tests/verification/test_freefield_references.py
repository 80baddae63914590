"""The free-field monopole model against published closed forms."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bemcheck.case.model import Medium
from bemcheck.observers import sphere
from bemcheck.solvers import freefield
from bemcheck.solvers.control import optimal as control
from bemcheck.solvers.response import free_response

AIR = Medium(speed_of_sound=343.0, density=1.21)


def freq_for_kd(kd, d):
    return kd * AIR.speed_of_sound / (2 * np.pi * d)


def test_monopole_power_kinsler():
    """W = ρck²|q|²/(8π); Kinsler, Frey, Coppens & Sanders (2000), Fundamentals of
    Acoustics, 4th ed., ch. 7: 100 Hz, |q| = 1e-3 m^3/s, ρ = 1.21, c = 343 -> 5.5413e-5 W."""
    assert freefield.monopole_power(100.0, AIR, 1e-3) == pytest.approx(5.5413e-5, rel=1e-4)
    z = freefield.impedance_matrix(100.0, AIR, [[0.0, 0.0, 0.0]])
    assert freefield.radiated_power(z, [1e-3]) == pytest.approx(5.5413e-5, rel=1e-4)


@pytest.mark.parametrize(
    ("kd", "ratio", "db"),
    [(1.0, 0.291927, 5.35), (np.pi, 1.0, 0.0)],
)
def test_one_control_source_nelson(kd, ratio, db):
    """One control source at distance d: q_c/q_p = −sinc(kd), W_min/W_p = 1 − sinc²(kd).
    Nelson, Curtis, Elliott & Bullmore (1987), 'The minimum power output of free field
    point sources and the active control of sound', J. Sound Vib. 116(3) 397–414:
    kd = 1 -> 0.291927 (5.35 dB); kd = π -> no attenuation."""
    d = 0.3
    f = freq_for_kd(kd, d)
    z = freefield.impedance_matrix(f, AIR, [[0, 0, 0], [d, 0, 0]])
    h = control.power_form(z)
    q_c = control.optimal_power_control(h, [0], [1], [1.0])
    assert q_c[0] == pytest.approx(-np.sinc(kd / np.pi), abs=1e-9)
    w_p = freefield.radiated_power(z, [1.0, 0.0])
    w_min = freefield.radiated_power(z, [1.0, q_c[0]])
    assert w_min / w_p == pytest.approx(ratio, abs=1e-6)
    assert control.attenuation_db(w_p, w_min) == pytest.approx(db, abs=5e-3)


def test_two_control_sources_on_a_line_nelson():
    """Two control sources at ±d on a line through the primary, kd = 0.5: each
    q = −0.520698 q_p and W_min/W_p = 0.001455 (28.37 dB); values computed from the
    formulas of Nelson et al. (1987), J. Sound Vib. 116(3) 397–414."""
    d = 0.2
    f = freq_for_kd(0.5, d)
    z = freefield.impedance_matrix(f, AIR, [[0, 0, 0], [d, 0, 0], [-d, 0, 0]])
    q_c = control.optimal_power_control(control.power_form(z), [0], [1, 2], [1.0])
    np.testing.assert_allclose(q_c, [-0.520698, -0.520698], atol=1e-6)
    q = np.concatenate([[1.0], q_c])
    ratio = freefield.radiated_power(z, q) / freefield.radiated_power(z, [1.0, 0, 0])
    assert ratio == pytest.approx(0.001455, abs=2e-6)
    assert control.attenuation_db(1.0, ratio) == pytest.approx(28.37, abs=0.01)


def test_far_field_power_integral_matches_closed_form():
    """(1/2ρc)∮|F|² dΩ = ½ Re(qᴴ R q) for any monopole set; exact identity of the
    free-field model (Nelson et al. 1987, eq. 2.9 derived from the far field). A Lebedev
    rule of degree 41 (Lebedev & Laikov 1999, via scipy.integrate.lebedev_rule) integrates
    it to 1e-6 relative at kd ≤ 5."""
    rng = np.random.default_rng(1)
    x = rng.uniform(-0.1, 0.1, (4, 3))
    q = rng.normal(size=4) + 1j * rng.normal(size=4)
    f = 1500.0
    d = sphere(41)
    r = free_response(f, AIR, x, d.unit, np.zeros((0, 3)))
    p = r.far_field @ q
    w_far = np.sum(d.weights * np.abs(p) ** 2) / (2 * AIR.density * AIR.speed_of_sound)
    w_closed = freefield.radiated_power(freefield.impedance_matrix(f, AIR, x), q)
    assert w_far == pytest.approx(w_closed, rel=1e-6)


def test_spl_round_trip_monopole_relation():
    """|p| = ωρ|q|/(4πr) at r = 1 m (Kinsler et al. 2000, ch. 7); 94 dB re 20 µPa is 1 Pa RMS."""
    q = freefield.volume_velocity_from_spl(200.0, AIR, 94.0)
    p = freefield.transfer_matrix(200.0, AIR, [[0, 0, 0]], [[1.0, 0, 0]])[0, 0] * q
    assert abs(p) / np.sqrt(2) == pytest.approx(10 ** (94 / 20) * 20e-6, rel=1e-12)
    assert freefield.spl_from_pressure(p) == pytest.approx(94.0, abs=1e-9)


positions = st.lists(st.tuples(*[st.floats(-0.5, 0.5, allow_nan=False)] * 3), min_size=2, max_size=6, unique=True)


def _separated(x, gap=1e-3):
    x = np.asarray(x)
    r = np.linalg.norm(x[:, None] - x[None], axis=2) + np.eye(len(x))
    return np.all(r > gap)


@settings(max_examples=60, deadline=None)
@given(x=positions, f=st.floats(20.0, 3000.0))
def test_adding_a_control_source_never_raises_minimum_power(x, f):
    """Property of the quadratic minimum (Nelson et al. 1987, sec. 3): a larger set of
    control sources can always reproduce the smaller set's optimum, so W_min never rises."""
    if not _separated(x) or len(x) < 3:
        return
    z = freefield.impedance_matrix(f, AIR, x)
    h = control.power_form(z)
    primary = [0]
    w = []
    for n_c in range(1, len(x)):
        ctl = list(range(1, n_c + 1))
        q_c = control.optimal_power_control(h, primary, ctl, [1.0])
        q = np.zeros(len(x), complex)
        q[0] = 1.0
        q[ctl] = q_c
        w.append(freefield.radiated_power(z, q))
    w_p = freefield.radiated_power(z, np.eye(len(x))[0])
    assert all(v >= -1e-12 * w_p for v in w)
    assert all(b <= a + 1e-9 * w_p for a, b in zip(w, w[1:]))


@settings(max_examples=60, deadline=None)
@given(x=positions, f=st.floats(20.0, 3000.0))
def test_transfer_impedances_are_reciprocal(x, f):
    """Reciprocity of the free-space Green's function, G(x, y) = G(y, x)
    (Kinsler et al. 2000; any acoustics text)."""
    if not _separated(x):
        return
    z = freefield.impedance_matrix(f, AIR, x)
    np.testing.assert_allclose(z, z.T, rtol=1e-12)


def test_coincident_control_sources_are_regularised_not_nan():
    """Two control sources at one point make R_cc singular: a warning and finite strengths
    whose sum is the one-source optimum (common practice, no source)."""
    d = 0.1
    f = freq_for_kd(1.0, d)
    x = [[0, 0, 0], [d, 0, 0], [d, 0, 1e-9]]
    z = freefield.impedance_matrix(f, AIR, x)
    with pytest.warns(control.ConditioningWarning):
        q_c = control.optimal_power_control(control.power_form(z), [0], [1, 2], [1.0])
    assert np.all(np.isfinite(q_c))
    assert q_c.sum() == pytest.approx(-np.sinc(1.0 / np.pi), abs=1e-6)


def test_delay_steered_pair_has_its_null_toward_the_control():
    """A primary and a control at distance d fed inverted and delayed by d/c form a
    cardioid-like pair with its null on the control's side (first-order gradient pair;
    Olson, Acoustical Engineering, 1957, sec. 8.6, from memory). Exact in the far field."""
    d, f = 0.15, 400.0
    k = 2 * np.pi * f / AIR.speed_of_sound
    dirs = np.array([[-1.0, 0, 0], [1.0, 0, 0], [0, 1.0, 0]])
    far = freefield.far_field_matrix(f, AIR, [[0, 0, 0], [-d, 0, 0]], dirs)
    q = np.concatenate([[1.0], control.delay_control([1.0], 1, k, d)])
    p = far @ q
    assert abs(p[0]) < 1e-12 * abs(far[0, 0])
    # front: |1 − e^{2ikd}| = 2|sin kd| times the single-source amplitude
    assert abs(p[1]) == pytest.approx(2 * abs(np.sin(k * d)) * abs(far[1, 0]), rel=1e-12)


def test_one_control_cancels_one_target_exactly():
    """Least squares with as many control sources as targets and no effort weight
    drives the target pressure to zero (Nelson & Elliott, Active Control of Sound,
    1992, sec. 2.3)."""
    f = 300.0
    dirs = np.array([[1.0, 0, 0]])
    far = freefield.far_field_matrix(f, AIR, [[0, 0, 0], [0.1, 0.2, 0]], dirs)
    q_c = control.optimal_pressure_control(far[:, :1], far[:, 1:], [1.0])
    assert abs(far @ np.concatenate([[1.0], q_c])) < 1e-12 * abs(far[0, 0])
    q_eff = control.optimal_pressure_control(far[:, :1], far[:, 1:], [1.0], effort=0.5)
    assert abs(q_eff[0]) < abs(q_c[0])

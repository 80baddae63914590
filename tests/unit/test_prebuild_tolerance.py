"""Placement tolerance: spread of attenuation over random control-source positions."""

import numpy as np
import pytest

from bemcheck.case.model import Medium
from bemcheck.prebuild import placement_spread, tolerance_for_loss
from bemcheck.solvers.control import optimal as control
from bemcheck.solvers.freefield import impedance_matrix

AIR = Medium(speed_of_sound=343.0, density=1.21)
FREQ = 200.0
K = 2 * np.pi * FREQ / AIR.speed_of_sound


def freefield_at(x):
    return impedance_matrix(FREQ, AIR, x)


def sinc_closure(x):
    """R_ij = (ρck²/4π) sinc(k r_ij), written out here independently of the solver
    (Nelson, Curtis, Elliott & Bullmore 1987, J. Sound Vib. 116(3) 397-414)."""
    r = np.linalg.norm(x[:, None, :] - x[None, :, :], axis=2)
    return AIR.density * AIR.speed_of_sound * K**2 / (4 * np.pi) * np.sinc(K * r / np.pi)


def one_control(d):
    return [[0, 0, 0]], [1.0], [[d, 0, 0]], [-np.sinc(K * d / np.pi)]


@pytest.mark.parametrize("impedance_at", [freefield_at, sinc_closure])
@pytest.mark.parametrize("d", [0.05, 0.2, 0.6])
def test_designed_attenuation_one_control_nelson(impedance_at, d):
    """One control at distance d with q_c = -sinc(kd) q_p: W_min/W_p = 1 - sinc²(kd)
    (Nelson et al. 1987); at zero tolerance every build is the design."""
    spread = placement_spread(impedance_at, *one_control(d), 0.0, trials=20, rng=0)
    expected = -10 * np.log10(1 - np.sinc(K * d / np.pi) ** 2)
    assert spread.designed_db == pytest.approx(expected, abs=1e-9)
    np.testing.assert_allclose(spread.attenuation_db, expected, atol=1e-9)
    assert spread.width_db == pytest.approx(0.0, abs=1e-9)


def test_two_controls_designed_attenuation():
    """Two controls at ±d on a line through the primary, kd = 0.5: 28.37 dB
    (computed from the formulas of Nelson et al. 1987)."""
    d = 0.5 / K
    x = [[0, 0, 0], [d, 0, 0], [-d, 0, 0]]
    q_c = control.optimal_power_control(control.power_form(freefield_at(np.array(x, float))), [0], [1, 2], [1.0])
    spread = placement_spread(freefield_at, x[:1], [1.0], x[1:], q_c, 0.0, trials=5, rng=0)
    assert spread.designed_db == pytest.approx(28.37, abs=5e-3)


@pytest.mark.parametrize("distribution", ["ball", "gaussian"])
def test_spread_grows_with_tolerance(distribution):
    """Same seed, same errors scaled up: the 5-95 % width and the loss at the
    5th percentile grow with the tolerance, from zero at zero tolerance (the
    median barely moves: moving closer to the primary helps as much as moving
    away hurts, to first order)."""
    d = 0.1
    tols = [0.0, 0.002, 0.005, 0.01, 0.02, 0.04]
    spreads = [
        placement_spread(freefield_at, *one_control(d), t, trials=300, rng=7, distribution=distribution) for t in tols
    ]
    widths = [s.width_db for s in spreads]
    losses = [s.designed_db - s.values_db[0] for s in spreads]
    assert widths[0] == pytest.approx(0.0, abs=1e-9)
    assert np.all(np.diff(widths) > 0)
    assert np.all(np.diff(losses) > 0)


def test_generator_and_seed_give_the_same_draws():
    a = placement_spread(freefield_at, *one_control(0.1), 0.01, trials=50, rng=11)
    b = placement_spread(freefield_at, *one_control(0.1), 0.01, trials=50, rng=np.random.default_rng(11))
    np.testing.assert_array_equal(a.attenuation_db, b.attenuation_db)


def test_ball_errors_stay_within_tolerance():
    """A build inside the ball cannot be worse than the control moved the full
    tolerance straight away from the primary (attenuation falls with distance here)."""
    d, t = 0.1, 0.03
    spread = placement_spread(freefield_at, *one_control(d), t, trials=400, rng=2)
    s = np.sinc(K * d / np.pi)
    worst = -10 * np.log10(1 + s * s - 2 * s * np.sinc(K * (d + t) / np.pi))
    assert spread.attenuation_db.min() >= worst - 1e-9
    assert spread.attenuation_db.min() < worst + 0.5


def test_tolerance_for_loss_brackets_the_allowed_loss():
    args = one_control(0.1)
    need = tolerance_for_loss(freefield_at, *args, 1.0, trials=300, rng=5, search_up_to=0.05, precision=1e-5)
    assert need.found and 0 < need.tolerance < 0.05
    assert need.loss_db <= 1.0

    def loss(t):
        s = placement_spread(freefield_at, *args, t, trials=300, rng=5, percentiles=(5.0,))
        return s.designed_db - s.values_db[0]

    assert loss(need.tolerance) == pytest.approx(need.loss_db, abs=1e-12)
    assert loss(need.tolerance + 1e-5) > 1.0
    loose = tolerance_for_loss(freefield_at, *args, 1.0, trials=300, rng=5, search_up_to=1e-4)
    assert not loose.found and loose.tolerance == 1e-4


def test_bad_arguments_are_refused():
    with pytest.raises(ValueError, match="distribution"):
        placement_spread(freefield_at, *one_control(0.1), 0.01, distribution="uniform")
    with pytest.raises(ValueError, match="tolerance"):
        placement_spread(freefield_at, *one_control(0.1), -0.01)
    with pytest.raises(ValueError, match="max_loss_db"):
        tolerance_for_loss(freefield_at, *one_control(0.1), 0.0)
    with pytest.raises(ValueError, match="strengths"):
        placement_spread(freefield_at, [[0, 0, 0]], [1.0], [[0.1, 0, 0]], [1.0, 2.0], 0.01)
    with pytest.raises(ValueError, match="primary_strengths"):
        placement_spread(freefield_at, [[0, 0, 0]], [0.0], [[0.1, 0, 0]], [1.0], 0.01)

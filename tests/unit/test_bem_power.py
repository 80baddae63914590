"""The sphere rules that integrate far-field power."""

import numpy as np
import pytest

from bemcheck.solvers.bem.power import LEBEDEV_ORDERS, power_directions


@pytest.mark.parametrize("k, radius", [(0.5, 0.2), (6.0, 0.5), (20.0, 1.0), (90.0, 1.0)])
def test_rule_integrates_two_point_interference(k, radius):
    """∫ e^{ik d̂·(x_i - x_j)} dΩ = 4π j_0(k |x_i - x_j|) (the n = 0 term of the plane-wave
    expansion; Abramowitz & Stegun 1964, 10.1.47, from memory): exact to 1e-8 for every
    pair within the ball, including kR = 90 where no Lebedev rule is fine enough and the
    Gauss-Legendre product rule takes over."""
    d, w = power_directions(k, radius)
    rng = np.random.default_rng(1)
    x = rng.normal(size=(20, 3))
    x *= radius / np.linalg.norm(x, axis=1, keepdims=True) * rng.uniform(0.2, 1.0, size=(20, 1))
    sep = x[:, None, :] - x[None, :, :]
    got = np.einsum("q,qij->ij", w, np.exp(1j * k * np.einsum("qa,ija->qij", d, sep)))
    exact = 4 * np.pi * np.sinc(k * np.linalg.norm(sep, axis=2) / np.pi)
    np.testing.assert_allclose(got, exact, rtol=0, atol=1e-8 * 4 * np.pi)


def test_excess_bandwidth_is_needed():
    """A Lebedev rule of degree 2kR only (no excess bandwidth) misses the same integral by
    more than 1e-4 at kR = 20, where the chosen rule is exact: the margin is not idle."""
    from scipy.integrate import lebedev_rule

    k, radius = 20.0, 1.0
    sep = 2 * radius * np.array([0.6, 0.48, 0.64])
    exact = 4 * np.pi * np.sinc(k * 2 * radius / np.pi)
    d, w = power_directions(k, radius)
    assert abs(w @ np.exp(1j * k * (d @ sep)) - exact) < 1e-10
    x, wl = lebedev_rule(next(o for o in LEBEDEV_ORDERS if o >= 2 * k * radius))
    assert abs(wl @ np.exp(1j * k * (x.T @ sep)) - exact) > 1e-4 * 4 * np.pi

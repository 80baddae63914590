"""Placement-tolerance Monte Carlo against closed-form statistics.

Layout: one primary at the origin (q_p = 1) and one control source at
distance d = 0.2 m, kd = 1, fed with the optimal strength q_c = -sinc(kd) q_p
(Nelson, Curtis, Elliott & Bullmore 1987, "The minimum power output of free
field point sources and the active control of sound", J. Sound Vib. 116(3),
397-414).  With the strength held and the control moved to distance d' from
the primary, the free-field power ratio is

    W/W_p = 1 + sinc²(kd) - 2 sinc(kd) sinc(kd')        (same paper, R_ij ∝ sinc(k r_ij))

so the attenuation is a function of d' alone, decreasing in d' while kd' < 4.49.
"""

import numpy as np
import pytest
from scipy import optimize, special, stats

from bemcheck.case.model import Medium
from bemcheck.prebuild import placement_spread, tolerance_for_loss
from bemcheck.solvers.freefield import impedance_matrix

AIR = Medium(speed_of_sound=343.0, density=1.21)
D = 0.2
K = 1.0 / D
FREQ = K * AIR.speed_of_sound / (2 * np.pi)
S = np.sinc(K * D / np.pi)


def z_at(x):
    return impedance_matrix(FREQ, AIR, x)


def run(tol, distribution, trials=4000, seed=3, percentiles=(5.0, 50.0)):
    return placement_spread(
        z_at,
        [[0, 0, 0]],
        [1.0],
        [[D, 0, 0]],
        [-S],
        tol,
        trials=trials,
        rng=seed,
        distribution=distribution,
        percentiles=percentiles,
    )


def power_ratio(d_moved):
    return 1 + S * S - 2 * S * np.sinc(K * d_moved / np.pi)


def attenuation(d_moved):
    return -10 * np.log10(power_ratio(d_moved))


def lens_volume(r, radius, dist):
    """Volume common to spheres of radii r and ``radius`` whose centres are ``dist`` apart
    (E. W. Weisstein, MathWorld, "Sphere-Sphere Intersection", eq. 16)."""
    return (
        np.pi
        * (radius + r - dist) ** 2
        * (dist**2 + 2 * dist * r - 3 * r**2 + 2 * dist * radius + 6 * r * radius - 3 * radius**2)
        / (12 * dist)
    )


def distance_quantile_ball(q, tol):
    """Quantile of d' for an error uniform in a ball of radius tol < d:
    P(d' <= r) = lens volume / ball volume."""
    ball = 4 / 3 * np.pi * tol**3
    return optimize.brentq(lambda r: lens_volume(r, tol, D) / ball - q, D - tol + 1e-15, D + tol - 1e-15)


def distance_quantile_gaussian(q, tol):
    """Quantile of d' for N(0, σ²) errors per axis, σ = tol/2: (d'/σ)² is noncentral
    chi-squared with 3 degrees of freedom and noncentrality (d/σ)² (Johnson, Kotz &
    Balakrishnan 1995, Continuous Univariate Distributions vol. 2, ch. 29; scipy.stats.ncx2)."""
    sigma = tol / 2
    return sigma * np.sqrt(stats.ncx2.ppf(q, 3, (D / sigma) ** 2))


@pytest.mark.parametrize(
    ("distribution", "mean_factor"),
    [
        # Mean-value theorem for the Helmholtz equation: the average of a regular
        # solution over a ball of radius t is u(centre)·3 j1(kt)/(kt)
        # (Courant & Hilbert 1962, Methods of Mathematical Physics vol. II, ch. IV; from memory).
        ("ball", lambda kt: 3 * special.spherical_jn(1, kt) / kt),
        # Over isotropic Gaussian errors: sinc(k|x|) is the directional mean of
        # plane waves e^{ik·x}, whose mean is the normal characteristic function
        # exp(-k²σ²/2) (σ = t/2).
        ("gaussian", lambda kt: np.exp(-((kt / 2) ** 2) / 2)),
    ],
)
def test_mean_power_ratio(distribution, mean_factor):
    """E[W/W_p] = 1 + s² - 2 s² M(kt) with the mean factor M of the error distribution."""
    tol = 0.1
    spread = run(tol, distribution)
    ratios = 10 ** (-spread.attenuation_db / 10)
    expected = 1 + S * S - 2 * S * S * mean_factor(K * tol)
    standard_error = ratios.std(ddof=1) / np.sqrt(ratios.size)
    assert abs(ratios.mean() - expected) < 4 * standard_error
    # The errors shift the mean by far more than the sampling error, so a sampler
    # with the wrong spread of radii would fail the first assertion.
    assert abs(expected - power_ratio(D)) > 10 * standard_error


@pytest.mark.parametrize("distribution", ["ball", "gaussian"])
def test_percentiles_match_distance_distribution(distribution):
    """The 5th and 50th percentiles of attenuation are the attenuations at the 95th
    and 50th percentiles of d' (attenuation falls as d' grows).  Monte Carlo
    error with 4000 trials is about 0.02 dB (measured over 10 seeds); 0.08 dB allowed."""
    tol = 0.05
    quantile = distance_quantile_ball if distribution == "ball" else distance_quantile_gaussian
    spread = run(tol, distribution)
    expected = [attenuation(quantile(0.95, tol)), attenuation(quantile(0.50, tol))]
    np.testing.assert_allclose(spread.values_db, expected, atol=0.08)
    assert spread.designed_db == pytest.approx(attenuation(D), abs=1e-9)


def test_tolerance_for_one_db_loss():
    """Tolerance (uniform ball) at which 95 % of builds lose at most 1 dB, against
    the same found from the closed-form distance distribution by root finding."""
    need = tolerance_for_loss(z_at, [[0, 0, 0]], [1.0], [[D, 0, 0]], [-S], 1.0, trials=4000, rng=3, search_up_to=0.15)
    exact = optimize.brentq(lambda t: attenuation(D) - attenuation(distance_quantile_ball(0.95, t)) - 1.0, 1e-4, 0.15)
    assert need.found
    assert need.tolerance == pytest.approx(exact, rel=0.02)
    assert need.loss_db <= 1.0
